"""Help-text helpers shared by the command modules (not a command: the name starts with ``_``)."""
from __future__ import annotations

import argparse
import textwrap

__all__ = ["Formatter", "wrap"]


class Formatter(argparse.RawDescriptionHelpFormatter):
    """Keeps the line breaks of the (pre-wrapped) description and of the examples."""


def wrap(text: str, width: int = 78) -> str:
    """Wrap each paragraph (separated by blank lines) of a help text."""
    return "\n\n".join(textwrap.fill(par, width) for par in text.split("\n\n"))
