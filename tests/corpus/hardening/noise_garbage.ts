[Version] 2.0
# GHz S RI R 50
[Number of Ports] 2
[Two-Port Data Order] 12_21
[Number of Frequencies] 1
[Number of Noise Frequencies] 2
[Network Data]
1 0.1 0.2 0.3 0.4 0.5 0.6 0.7 0.8
[Noise Data]
1 0.5 0.3 45 0.2
2 garbage 0.35 50 0.25
[End]
