"""``chanmesh new FAMILY``: print a commented starter design for one channel family."""

from __future__ import annotations

import argparse
import sys
from importlib import resources

from chanmesh.design.model import PATH_KINDS

NAME = "new"
HELP = "print a commented starter design (arc, spiral, serpentine, chambers, straight, segments)"
ORDER = 5


def starter_text(family: str) -> str:
    return resources.files("chanmesh").joinpath("starters", f"{family}.toml").read_text(encoding="utf-8")


def add_arguments(p: argparse.ArgumentParser) -> None:
    p.add_argument("family", choices=sorted(PATH_KINDS), help="channel family")


def run(args: argparse.Namespace) -> int:
    sys.stdout.write(starter_text(args.family))
    return 0
