"""Hybrid logical clock: orders changes across devices without trusting their clocks blindly.

A stamp is ``(wall milliseconds, counter, device id)``, written as fixed-width text so that text
order is stamp order. A device's stamps never go backwards even if its clock does, and a device
that receives a stamp from the future moves its own clock past it, so causality is kept.
"""

from __future__ import annotations

import time
from collections.abc import Callable
from dataclasses import dataclass


@dataclass(frozen=True, order=True, slots=True)
class Stamp:
    """One hybrid-logical-clock reading."""

    millis: int
    counter: int
    device: str

    def text(self) -> str:
        """Fixed-width text form whose sort order equals the stamp order."""
        return f"{self.millis:015d}-{self.counter:06d}-{self.device}"

    @classmethod
    def parse(cls, text: str) -> Stamp:
        """Read a stamp written by ``text()``."""
        millis, counter, device = text.split("-", 2)
        return cls(int(millis), int(counter), device)


class HybridClock:
    """Issues increasing stamps for one device."""

    def __init__(self, device: str, wall: Callable[[], float] = time.time, last: Stamp | None = None):
        self.device = device
        self.wall = wall
        self.last = last or Stamp(0, 0, device)

    def now(self) -> Stamp:
        """A stamp later than every stamp issued or observed so far."""
        millis = int(self.wall() * 1000)
        if millis > self.last.millis:
            self.last = Stamp(millis, 0, self.device)
        else:
            self.last = Stamp(self.last.millis, self.last.counter + 1, self.device)
        return self.last

    def many(self, count: int) -> list[str]:
        """``count`` consecutive stamps as text (one wall reading), for bulk writes."""
        first = self.now()
        stamps = [first.text()]
        prefix, device = f"{first.millis:015d}-", self.device
        stamps += [f"{prefix}{first.counter + i:06d}-{device}" for i in range(1, count)]
        if count > 1:
            self.last = Stamp(first.millis, first.counter + count - 1, device)
        return stamps

    def observe(self, other: Stamp) -> None:
        """Move past a stamp received from another device."""
        if (other.millis, other.counter) > (self.last.millis, self.last.counter):
            self.last = Stamp(other.millis, other.counter, self.device)
