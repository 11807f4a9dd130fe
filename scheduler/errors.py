"""Input errors: every problem in a file is collected and reported together.

A :class:`Problem` says where (file, row or key) and what is wrong.  Loaders gather
problems in a :class:`ProblemList` and raise one :class:`InputError` at the end, so
a user fixes a file in one pass.  The command line prints each problem on its own line
and exits with status 2.
"""

from __future__ import annotations

from dataclasses import dataclass, field


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
