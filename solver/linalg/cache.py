"""Factorizations kept for reuse under a memory budget.

A step solver keeps one factorization per step length so that repeated lengths reuse it; on a
large mesh one factorization can take a good part of the machine's memory, so the cache
releases them before a new one is made: first those that cannot be used again (the caller
says which, e.g. the undrained instant, solved once, or a matrix that has changed), then the
least recently used, until what it holds plus the new one's estimated peak fits the budget.
"""

from __future__ import annotations

from collections import OrderedDict
from typing import Callable, Hashable

from .memory import available_bytes


class FactorCache:
    """Factorizations by key (least recently used first), holding at most ``budget`` bytes.

    Parameters
    ----------
    budget : bytes the kept factorizations plus the one being made may take; default 90% of
        the memory available when the cache is made.
    """

    def __init__(self, budget: float | None = None):
        self.budget = 0.9 * available_bytes() if budget is None else float(budget)
        self._items: OrderedDict[Hashable, object] = OrderedDict()
        self.n_released = 0

    def __len__(self) -> int:
        return len(self._items)

    def __contains__(self, key) -> bool:
        return key in self._items

    def keys(self) -> list:
        return list(self._items)

    def get(self, key):
        """The factorization kept under ``key`` (now the most recently used), or None."""
        fac = self._items.get(key)
        if fac is not None:
            self._items.move_to_end(key)
        return fac

    def held_bytes(self) -> int:
        return sum(f.memory_bytes for f in self._items.values())

    def put(self, key, fac) -> None:
        old = self._items.pop(key, None)
        if old is not None and old is not fac:
            old.free()
        self._items[key] = fac

    def release(self, key) -> None:
        """Free the factorization under ``key`` now (no error if there is none)."""
        fac = self._items.pop(key, None)
        if fac is not None:
            fac.free()
            self.n_released += 1

    def release_where(self, drop: Callable[[Hashable], bool]) -> None:
        for key in [k for k in self._items if drop(k)]:
            self.release(key)

    def make_room(self, need: float, useless: Callable[[Hashable], bool] | None = None) -> None:
        """Before making a factorization whose peak is ``need`` bytes: release those that are
        ``useless``, then the least recently used, until the held ones and ``need`` fit."""
        if useless is not None:
            self.release_where(useless)
        while self._items and self.held_bytes() + need > self.budget:
            self.release(next(iter(self._items)))

    def clear(self) -> None:
        """Free everything held."""
        self.release_where(lambda key: True)
