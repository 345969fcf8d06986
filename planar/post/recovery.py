"""Nodal stresses (region-wise averaging and SPR): the same module as :mod:`planar.core.recovery`.

Stress recovery produces part of a Result, so it lives in the core. This path stays for scripts
written against it: ``from planar.post.recovery import recover`` and ``planar.post.recovery.X``
reach the very objects of :mod:`planar.core.recovery` (the module is one object under both names,
so settings such as ``PREPARE_ABOVE`` changed here are the ones the core reads).
"""
import sys

from ..core import recovery as _recovery

sys.modules[__name__] = _recovery
