"""Errors raised for bad input files.

Every problem with a user's file is reported as one line naming the file, the line
(where known), the entry and what is wrong. Several problems of one file may be raised
together so that the user can fix them in one pass.
"""

from __future__ import annotations


def format_problem(file, entry, problem, line=None):
    """Return the one-line text of a problem: ``file:line: entry: problem``.

    Parameters
    ----------
    file : str or os.PathLike or None
        The file the problem is in (None for input that came from the command line).
    entry : str or None
        The entry inside the file (a process id, a reaction, a key path).
    problem : str
        What is wrong, in plain words.
    line : int or None
        1-based line number in the file, when known.
    """
    where = "" if file is None else str(file)
    if line is not None and where:
        where = f"{where}:{line}"
    parts = [p for p in (where, entry, problem) if p]
    return ": ".join(parts)


class InputError(ValueError):
    """One or more problems with user input; ``str()`` gives one line per problem."""

    def __init__(self, problems):
        if isinstance(problems, str):
            problems = [problems]
        self.problems = list(problems)
        super().__init__("\n".join(self.problems))


def input_error(file, entry, problem, line=None):
    """Build an :class:`InputError` holding a single formatted problem."""
    return InputError([format_problem(file, entry, problem, line)])
