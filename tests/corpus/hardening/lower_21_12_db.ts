[Version] 2.0
# GHz S DB R 50
[Number of Ports] 2
[Two-Port Data Order] 21_12
[Number of Frequencies] 1
[Matrix Format] Lower
[Network Data]
1 -20 0 -40 90 0 180
[End]
