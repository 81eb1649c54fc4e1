"""``coilstage export DRAWING -o WIRELIST.csv [--build-list FILE]``: a drawing's wire list and build list.

A command module (``HELP``, ``add_arguments``, ``run``); the work is in :mod:`coilstage.wirelist`.
"""

from __future__ import annotations

import argparse

from coilstage import wirelist

HELP = wirelist.HELP_EXPORT


def add_arguments(parser: argparse.ArgumentParser) -> None:
    wirelist.EXPORT.add_arguments(parser)


def run(args: argparse.Namespace) -> int:
    return wirelist.run_export(args)
