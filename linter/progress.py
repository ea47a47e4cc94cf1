"""A progress bar on standard error while many decks are checked.

Shown only when the stream is a terminal and more than :data:`HANDFUL` decks are checked, so CI logs
(not a terminal) never get one. It shows the decks done, the findings so far and the elapsed time.
``NO_COLOR`` or ``--no-color`` take the colour away, not the bar. rich is imported only when a bar is shown.
"""
from __future__ import annotations

import os
import sys
from typing import Optional

HANDFUL = 5


class Progress:
    """``start(total)``, ``advance(findings)`` per deck done, ``stop()``; does nothing for a handful of decks."""

    def __init__(self, stream, color: bool = True, force: bool = False):
        self.stream = stream
        self.color = color
        self.force = force
        self._bar = None
        self._task = None
        self._found = 0

    def start(self, total: int) -> None:
        if total <= HANDFUL:
            return
        from rich.console import Console
        from rich.progress import BarColumn, MofNCompleteColumn, Progress as Bar, TextColumn, TimeElapsedColumn

        console = Console(file=self.stream, force_terminal=True if self.force else None,
                          no_color=not self.color, highlight=False)
        self._bar = Bar(TextColumn("checking decks"), BarColumn(), MofNCompleteColumn(),
                        TextColumn("{task.fields[findings]} finding(s)"), TimeElapsedColumn(),
                        console=console, transient=True)
        self._task = self._bar.add_task("decks", total=total, findings=0)
        self._bar.start()

    def advance(self, findings: int) -> None:
        if self._bar is not None:
            self._found += findings
            self._bar.update(self._task, advance=1, findings=self._found)

    def stop(self) -> None:
        if self._bar is not None:
            self._bar.stop()
            self._bar = None


def for_terminal(stream=None, no_color: bool = False) -> Optional[Progress]:
    """A :class:`Progress` on ``stream`` (default: standard error) when it is a terminal, else None."""
    stream = stream if stream is not None else sys.stderr
    try:
        tty = bool(stream.isatty())
    except (AttributeError, ValueError):
        tty = False
    if not tty:
        return None
    return Progress(stream, color=not (no_color or os.environ.get("NO_COLOR")))
