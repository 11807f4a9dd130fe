"""A night's set-up choice: which delay line each station feeds and the fixed delays.

A :class:`Choice` is a configuration's stations routed to delay lines with a fixed
delay (optical path, metres) on each line in use; :meth:`Choice.as_configuration` turns
it into a :class:`~scheduler.model.array.Configuration` so that everything downstream
(windows, the queue, the verifier) works on it unchanged.  :meth:`Choice.changes_from`
words how it differs from tonight's set-up.
"""

from __future__ import annotations

from dataclasses import dataclass

from scheduler.model.array import ArrayModel, Configuration


@dataclass(frozen=True)
class Choice:
    """``feeds``: (delay line, station) in the configuration's station order;
    ``offsets_m``: (delay line, fixed delay in metres) for every line in use."""

    configuration: str
    feeds: tuple[tuple[str, str], ...]
    offsets_m: tuple[tuple[str, float], ...]

    @classmethod
    def current(cls, array: ArrayModel, configuration: str) -> Choice:
        """The configuration as the array file states it: tonight's set-up."""
        c = array.configuration(configuration)
        return cls(c.name, c.feeds, tuple((ln, c.offset_m(ln)) for ln, _ in c.feeds))

    def line_of(self, station: str) -> str:
        return next(ln for ln, st in self.feeds if st == station)

    def offset_of(self, line: str) -> float:
        return dict(self.offsets_m).get(line, 0.0)

    def as_configuration(self, name: str) -> Configuration:
        """This choice as a configuration called ``name`` (zero offsets left out)."""
        return Configuration(name, self.feeds,
                             tuple((ln, f) for ln, f in self.offsets_m if f != 0.0))  # fmt: skip

    def changes_from(self, current: Choice) -> tuple[str, ...]:
        """How this choice differs from ``current`` (same configuration), in words:
        ``"jasper on rail-4"`` for each station fed by another line, ``"rail-2 +30 m"``
        for each fixed delay changed (by that much); empty when they are the same."""
        words = []
        for station in (st for _, st in self.feeds):
            was, now = current.line_of(station), self.line_of(station)
            if now != was:
                words.append(f"{station} on {now}")
        lines = dict.fromkeys([ln for ln, _ in self.feeds] + [ln for ln, _ in current.feeds])
        for line in lines:
            used_now = any(ln == line for ln, _ in self.feeds)
            before, after = current.offset_of(line), self.offset_of(line)
            if used_now and after != before:
                words.append(f"{line} {after - before:+g} m")
        return tuple(words)

    def toml(self, name: str) -> str:
        """The ``[[configurations]]`` table of this choice, to paste into an array file."""
        feeds = ", ".join(f'"{ln}" = "{st}"' for ln, st in self.feeds)
        text = f'[[configurations]]\nname = "{name}"\nfeeds = {{ {feeds} }}\n'
        offsets = [(ln, f) for ln, f in self.offsets_m if f != 0.0]
        if offsets:
            text += "fixed_offsets_m = { " + ", ".join(f'"{ln}" = {f:g}' for ln, f in offsets)
            text += " }\n"
        return text
