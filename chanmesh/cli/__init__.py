"""The ``chanmesh`` command. Each subcommand is a module ``chanmesh/cli/cmd_<name>.py`` that
defines ``NAME``, ``HELP``, ``add_arguments(parser)`` and ``run(args) -> int``; modules are
discovered, so adding a command touches no other file.

Only this module turns chanmesh's own errors into a one-line message and an exit code:
2 for bad input (design, file, option), 130 for an interrupt.

Start-up stays cheap: command modules import only the standard library and light chanmesh
modules at import time, and the heavy libraries (numpy, gmsh, pyvista, matplotlib, dask, ...)
inside ``run`` (tests/test_cli_startup.py checks it). An interrupt while the command line is
read and the command module imported ends the process at once with one line and 130 (nothing
has been written yet); once the command runs, it raises ``KeyboardInterrupt`` so that staged
output is cleaned up, and ``main`` turns it into the same line and 130. A Ctrl-C that lands
inside a C extension's import surfaces as some other exception (scipy's ``ImportError:
initialization failed``); any exception after a Ctrl-C is reported as the interrupt it is.
"""

from __future__ import annotations

import gc
import importlib
import os
import pkgutil
import signal
import sys
import threading
from types import ModuleType

from chanmesh import __version__
from chanmesh.cli.argtypes import OneLineParser
from chanmesh.errors import ChanmeshError
from chanmesh.interrupt import EXIT_INTERRUPT, quit_now

EXIT_INPUT = 2


class _Interrupts:
    """SIGINT while a command runs: remember it, then raise ``KeyboardInterrupt`` as Python does."""

    seen = False

    @classmethod
    def handler(cls, signum: int, frame: object) -> None:
        cls.seen = True
        raise KeyboardInterrupt


def _commands() -> list[ModuleType]:
    pkg = importlib.import_module("chanmesh.cli")
    mods = []
    for info in pkgutil.iter_modules(pkg.__path__):
        if info.name.startswith("cmd_"):
            mods.append(importlib.import_module(f"chanmesh.cli.{info.name}"))
    return sorted(mods, key=lambda m: getattr(m, "ORDER", 50))


def build_parser() -> OneLineParser:
    parser = OneLineParser(
        prog="chanmesh",
        description="Labelled, wall-graded 3D meshes of curved microchannels from a design file.",
    )
    parser.add_argument("--version", action="version", version=f"chanmesh {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")
    for mod in _commands():
        p = sub.add_parser(mod.NAME, help=mod.HELP, description=mod.HELP)
        mod.add_arguments(p)
        p.set_defaults(_run=mod.run)
    return parser


def main(argv: list[str] | None = None) -> int:
    in_main_thread = threading.current_thread() is threading.main_thread()
    previous = signal.signal(signal.SIGINT, quit_now) if in_main_thread else None
    try:
        parser = build_parser()
        args = parser.parse_args(argv)
        if in_main_thread:
            _Interrupts.seen = False
            signal.signal(signal.SIGINT, _Interrupts.handler)  # the command cleans up
        try:
            code = _run(parser, args)
            if in_main_thread:  # from here on a Ctrl-C finds nothing to clean up
                signal.signal(signal.SIGINT, previous)
        except KeyboardInterrupt:  # arrived after the command's own handling, before the line above
            code = _interrupted(args)
        if _Interrupts.seen and code == 0:  # the work finished, but the user did press Ctrl-C
            code = _interrupted(args)
        if code == EXIT_INTERRUPT and previous is quit_now:  # started as the command (interrupt.py)
            # the clean-up is done and the line printed. Leave now, skipping interpreter
            # teardown: a KeyboardInterrupt that passed through a C-level run of Python code
            # (inside some library's import) makes CPython end the process by SIGINT at exit
            # (status -2, not 130) even once caught, and a library left half-imported by the
            # interrupt can abort the teardown (seen: "Fatal Python error ... finalizing", -6)
            sys.stdout.flush()
            sys.stderr.flush()
            os._exit(code)
        if previous is quit_now:
            # the command is done and its status known; Python's own teardown puts back the
            # default SIGINT action, which would kill the process (status -2) for a Ctrl-C in
            # the last moments. An ignored SIGINT stays ignored through teardown.
            signal.signal(signal.SIGINT, signal.SIG_IGN)
            previous = signal.SIG_IGN
            # and its outputs are closed and in place: the collector's passes over every
            # object at exit (matplotlib's and scipy's too) would find nothing to do but take
            # 0.15 s of a build's wall time (bench/openfoam_write.py); objects are still freed
            gc.freeze()
        return code
    finally:
        if in_main_thread:
            signal.signal(signal.SIGINT, previous)


def _run(parser: argparse.ArgumentParser, args: argparse.Namespace) -> int:
    if not getattr(args, "_run", None):
        parser.print_help()
        return EXIT_INPUT
    try:
        return int(args._run(args) or 0)
    except ChanmeshError as exc:
        print(f"chanmesh {args.command}: error: {exc}", file=sys.stderr)
        return EXIT_INPUT
    except BrokenPipeError:  # output piped into a reader that stopped early (`| head`)
        os.dup2(os.open(os.devnull, os.O_WRONLY), sys.stdout.fileno())  # no second error at exit
        return 0
    except KeyboardInterrupt:
        return _interrupted(args)
    except Exception:
        if _Interrupts.seen:  # the interrupt's doing, whatever form it took on the way up
            return _interrupted(args)
        raise


def _interrupted(args: argparse.Namespace) -> int:
    print(f"chanmesh {args.command}: interrupted; no partial output was left under a final name", file=sys.stderr)
    return EXIT_INTERRUPT


if __name__ == "__main__":  # pragma: no cover
    sys.exit(main())
