"""A depth-ceil(log2 n) prefix network in which no value drives more than two cell inputs anywhere
(``prefix_figures.value_loads`` 2), the start ``adder-forge search --max-loads 2`` needs: no classic
network has it (Kogge-Stone's column 0 is read once per level).

Our construction: column c (with b = bit_length(c), so c completes at level b as in Kogge-Stone) first
builds Kogge-Stone's windows G[c : c - 2^t + 1] for t = 1 .. log2 w, then at level b joins the complete
column d = c - w, where w = 2^(b-2) in the lower quarter of its octave (c < 2^(b-1) + 2^(b-2)) and
2^(b-1) in the upper one. Every complete column d in [2^(b-2), 2^(b-1)) is so read exactly twice, by
d + 2^(b-2) and d + 2^(b-1), at the level after it completes, and every window once laterally and once
by its own column. 14, 42, 114, 290, 706 cells at 8 .. 128 inputs; an exact integer model of the network
file found no fewer at 16 and 32 with loads <= 2 (docs/search.md).
"""

from __future__ import annotations


def read_twice_rows(n: int) -> list[list[tuple[int, int]]]:
    levels = (n - 1).bit_length()
    rows: list[list[tuple[int, int]]] = [[] for _ in range(levels)]
    for c in range(1, n):
        b = c.bit_length()
        if b == 1:
            w = 1
        else:
            w = 1 << (b - 2) if c - (1 << (b - 1)) < 1 << (b - 2) else 1 << (b - 1)
        t = 1
        while 1 << t <= w:
            rows[t - 1].append((c, c - (1 << (t - 1))))
            t += 1
        rows[b - 1].append((c, c - w))
    return rows
