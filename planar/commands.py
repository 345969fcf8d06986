"""Moved: the sub-commands are now the modules of :mod:`planar.cli` (``planar plugins`` is
:mod:`planar.cli.plugins`). This module is kept for one release and will be removed.
"""
from __future__ import annotations

import warnings

warnings.warn("planar.commands is deprecated: the commands live in the planar.cli package "
              "(planar.cli.plugins, planar.cli.verify, ...)", DeprecationWarning, stacklevel=2)

__all__: list[str] = []
