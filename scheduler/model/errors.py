"""Input errors: every problem in every input is collected and reported together.

A :class:`Problem` says where (file or option, row or key) and what is wrong.  Loaders
gather problems in a :class:`ProblemList` and raise one :class:`InputError` at the end;
a command gathers the errors of all its inputs with :class:`Gather`, so a user fixes
everything in one pass.  The command line prints each problem on its own line and exits
with status 2.
"""

from __future__ import annotations

from collections.abc import Callable
from dataclasses import dataclass, field
from typing import TypeVar

T = TypeVar("T")


@dataclass(frozen=True)
class Problem:
    """One thing wrong with one input.

    ``source`` is the file (or the command-line option), ``where`` the row, column or
    key inside it (may be empty), ``message`` what is wrong, quoting the bad value.
    """

    source: str
    where: str
    message: str

    def __str__(self) -> str:
        place = f"{self.source}: {self.where}" if self.where else self.source
        return f"{place}: {self.message}"


class InputError(ValueError):
    """Bad input; carries every problem found."""

    def __init__(self, problems: list[Problem] | Problem):
        self.problems = [problems] if isinstance(problems, Problem) else list(problems)
        super().__init__("\n".join(str(p) for p in self.problems))


@dataclass
class ProblemList:
    """Collects problems for one source; ``raise_if_any`` raises them together."""

    source: str
    problems: list[Problem] = field(default_factory=list)

    def add(self, where: str, message: str) -> None:
        self.problems.append(Problem(self.source, where, message))

    def __bool__(self) -> bool:
        return bool(self.problems)

    def raise_if_any(self) -> None:
        if self.problems:
            raise InputError(self.problems)


@dataclass
class Gather:
    """Runs several loaders, keeps the problems of each, raises them all at the end.

    ``take(load, *args)`` returns what ``load`` returns, or None when it raised
    :class:`InputError` (its problems are kept); ``add`` records a problem directly.
    """

    problems: list[Problem] = field(default_factory=list)

    def take(self, load: Callable[..., T], *args: object) -> T | None:
        try:
            return load(*args)
        except InputError as exc:
            self.problems.extend(exc.problems)
            return None

    def add(self, source: str, where: str, message: str) -> None:
        self.problems.append(Problem(source, where, message))

    def raise_if_any(self) -> None:
        if self.problems:
            raise InputError(self.problems)
