"""Ctrl-C before a command has started any work: leave at once with one line and exit 130.

Python turns SIGINT into ``KeyboardInterrupt``, which during the imports of start-up would
print a traceback. Until the command runs (and can clean up after itself), chanmesh installs
``quit_now`` instead: nothing has been written yet, so there is nothing to undo. The
command line (``cli.main``) switches back to ``KeyboardInterrupt`` once the command runs.

Standard library only: this module is imported first, before anything heavy, and installs
the handler as it is imported (``install_early`` at the bottom).
"""

from __future__ import annotations

import _signal  # the C function itself: no Python-level window inside signal.signal
import os
import signal
import sys
import threading

EXIT_INTERRUPT = 130
"""128 + SIGINT: the shell's status for a process ended by Ctrl-C."""


def quit_now(signum: int, frame: object) -> None:
    """SIGINT handler: one line on standard error, exit status 130, no clean-up needed."""
    os.write(2, b"chanmesh: interrupted\n")
    os._exit(EXIT_INTERRUPT)


def started_as_command() -> bool:
    """True while Python runs the ``chanmesh`` console script or ``python -m chanmesh[.cli]``
    (``sys.argv[0]`` is ``-m`` while ``-m`` imports the package), not when a program of the
    user's imports chanmesh as a library."""
    first = sys.argv[0] if sys.argv else ""
    return first == "-m" or os.path.basename(first) == "chanmesh"


def install_early() -> None:
    """Install ``quit_now`` when started as the command, from the main thread."""
    if started_as_command() and threading.current_thread() is threading.main_thread():
        _signal.signal(signal.SIGINT, quit_now)


install_early()  # at import, so that the handler is in place when this module's import ends
