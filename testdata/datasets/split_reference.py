#!/usr/bin/python3
"""Reference for datasets.StratifiedSplit, datasets.RandomSplit and their generator, written apart
from the Go code: PCG-DXSM 128/64 as math/rand/v2 defines it (state = state *
mul + inc mod 2^128, multiplier 0x2360ed051fc65da44385df649fccf645, increment
0x5851f42d4c957f2d14057b7ef767814f, DXSM output with 0xda942042e4dd58b5;
constants from memory of Go's src/math/rand/v2/pcg.go, confirmed when the
outputs match), Lemire's bounded draw, Fisher-Yates from the last position.

Run: /usr/bin/python3 testdata/datasets/split_reference.py
"""
import math

M64 = (1 << 64) - 1
MUL = 0x2360ED051FC65DA44385DF649FCCF645
INC = 0x5851F42D4C957F2D14057B7EF767814F
SPLIT_STREAM = 0x5375726574790001


class PCG:
    def __init__(self, seed1, seed2):
        self.state = (seed1 << 64) | seed2

    def uint64(self):
        self.state = (self.state * MUL + INC) & ((1 << 128) - 1)
        hi, lo = self.state >> 64, self.state & M64
        hi ^= hi >> 32
        hi = (hi * 0xDA942042E4DD58B5) & M64
        hi ^= hi >> 48
        return (hi * (lo | 1)) & M64


def below(g, n):
    x = g.uint64() * n
    hi, lo = x >> 64, x & M64
    if lo < n:
        thresh = ((1 << 64) - n) % n
        while lo < thresh:
            x = g.uint64() * n
            hi, lo = x >> 64, x & M64
    return hi


def shuffle(g, s):
    for i in range(len(s) - 1, 0, -1):
        j = below(g, i + 1)
        s[i], s[j] = s[j], s[i]


def round_half_away(x):
    return int(math.floor(x + 0.5)) if x >= 0 else -int(math.floor(-x + 0.5))


def stratified_split(labels, num_classes, fraction, seed):
    g = PCG(seed, SPLIT_STREAM)
    first = []
    for c in range(num_classes):
        rows = [i for i, l in enumerate(labels) if l == c]
        shuffle(g, rows)
        first += rows[: round_half_away(fraction * len(rows))]
    return sorted(first)


g = PCG(1, SPLIT_STREAM)
print("draws below 1000, seed 1:", [below(g, 1000) for _ in range(4)])
g = PCG(1, 2)
print("PCG(1, 2) Uint64:", [g.uint64() for _ in range(3)])
print("split of 0,1 x6 at 0.5, seed 1:", stratified_split([0, 1] * 6, 2, 0.5, 1))


def random_split(n, fraction, seed):
    g = PCG(seed, SPLIT_STREAM)
    rows = list(range(n))
    shuffle(g, rows)
    return sorted(rows[: round_half_away(fraction * n)])


print("random split of 12 rows at 0.5, seed 1:", random_split(12, 0.5, 1))
print("random split of 7 rows at 0.3, seed 5:", random_split(7, 0.3, 5))
