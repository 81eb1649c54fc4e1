"""``coilstage import WIRELIST.csv -o DRAWING.toml [--base DRAWING_OR_TOML]``: a drawing from a wire list.

A command module (``HELP``, ``add_arguments``, ``run``); the work is in :mod:`coilstage.wirelist`,
whose docstring lists the wire list's columns.
"""

from __future__ import annotations

import argparse

from coilstage import wirelist

HELP = wirelist.HELP_IMPORT


def add_arguments(parser: argparse.ArgumentParser) -> None:
    wirelist.IMPORT.add_arguments(parser)


def run(args: argparse.Namespace) -> int:
    return wirelist.run_import(args)
