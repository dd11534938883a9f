"""Step messages of a run: what the planner is told while prepkit works.

Whether to speak at all, and whether a progress bar may be drawn, are decided
by the caller (the command line reads ``--quiet``, ``CI`` and the terminal);
nothing here reads the environment.
"""

from __future__ import annotations

import contextlib
import sys
from collections.abc import Callable, Iterator

__all__ = ["Say", "Steps", "draws_bar"]

#: Receives one message for the planner.
Say = Callable[[str], None]


class Steps:
    """Step messages through ``say``: shown unless quiet.

    Parameters
    ----------
    say : callable
        Receives each message.
    quiet : bool
        Say nothing.
    terminal : bool, optional
        The messages go to a terminal, where a progress bar may be drawn.
    """

    def __init__(self, say: Say, *, quiet: bool, terminal: bool = False) -> None:
        self.enabled = not quiet
        self._say = say
        self._terminal = terminal

    def __call__(self, message: str) -> None:
        """Say ``message``, unless quiet."""
        if self.enabled:
            self._say(message)

    @property
    def interactive(self) -> bool:
        """True when a progress bar may be drawn on the terminal."""
        return self.enabled and self._terminal


@contextlib.contextmanager
def draws_bar(wanted: bool) -> Iterator[Callable[[int, int], None] | None]:
    """A progress callback drawing a tqdm bar of draws on stderr, or None when not wanted."""
    if not wanted:
        yield None
        return
    from tqdm import tqdm

    bar = tqdm(desc="uncertainty draws", unit="draw", file=sys.stderr, leave=False,
               dynamic_ncols=True)

    def show(done: int, total: int) -> None:
        bar.total = total
        bar.update(done - bar.n)

    try:
        yield show
    finally:
        bar.close()
