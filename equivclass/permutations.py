"""Parity of a permutation given as two orderings of the same items (imports nothing from the project)."""
from __future__ import annotations


def parity(seq_from, seq_to) -> int:
    """+1 if seq_to is an even permutation of seq_from, −1 if odd (cycle decomposition). A KeyError means
    seq_to holds an item that seq_from does not."""
    pos = {v: k for k, v in enumerate(seq_from)}
    perm = [pos[v] for v in seq_to]
    sign, seen = 1, [False] * len(perm)
    for i in range(len(perm)):
        if seen[i]:
            continue
        j, length = i, 0
        while not seen[j]:
            seen[j] = True
            j = perm[j]
            length += 1
        if length % 2 == 0:
            sign = -sign
    return sign
