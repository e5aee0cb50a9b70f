[Version] 2.0
# GHz S RI R 50
[Number of Ports] 2
[Two-Port Data Order] 21_12
[Number of Frequencies] 1
[Matrix Format] Lower
[Network Data]
1 0.1 0.2 0.3 0.4 0.5 0.6
[End]
