"""Disjoint sets (union–find with path halving): connected components and orbits from pairwise links.

Imports nothing from the project; every stage that joins atoms into classes uses this one structure.
"""
from __future__ import annotations


class DisjointSets:
    """Classes of ``items`` merged by ``union``; the smallest item of a class is its representative."""

    def __init__(self, items):
        self.parent = {i: i for i in items}

    def __contains__(self, item) -> bool:
        return item in self.parent

    def find(self, i):
        parent = self.parent
        while parent[i] != i:
            parent[i] = parent[parent[i]]
            i = parent[i]
        return i

    def union(self, i, j) -> bool:
        """Merge the classes of i and j; False if they were one class already."""
        ri, rj = self.find(i), self.find(j)
        if ri == rj:
            return False
        self.parent[max(ri, rj)] = min(ri, rj)
        return True

    def groups(self) -> list[list]:
        """The classes as sorted lists, ordered by their smallest member."""
        out: dict = {}
        for i in self.parent:
            out.setdefault(self.find(i), []).append(i)
        return sorted((sorted(v) for v in out.values()), key=lambda v: v[0])
