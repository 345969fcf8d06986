"""``planar plugins``: the installed element types and load kinds, and the plugins that failed to load."""
from __future__ import annotations

import argparse

COMMAND = "plugins"
HELP = "list the installed element types and load kinds, and the plugins that failed to load"


def _table(rows: list[tuple[str, ...]]) -> list[str]:
    widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
    return ["  " + "  ".join(c.ljust(w) for c, w in zip(r, widths)).rstrip() for r in rows]


def run(args: argparse.Namespace) -> int:
    """Exit code 0 when every entry point loaded, 1 when there are problems (they are listed)."""
    from ..core.registry import GROUPS, registry

    reg = registry()
    rows = [("name", "kind", "distribution", "version", "provided by")]
    for kind in GROUPS:
        for e in sorted(reg.entries[kind].values(), key=lambda e: (e.distribution != "planar", e.name)):
            rows.append((e.name, kind, e.distribution, e.version, e.value))
    print("Installed element types and load kinds (entry-point groups " + ", ".join(GROUPS.values()) + "):")
    print("\n".join(_table(rows)))
    old = [f"{o} -> {n}" for kind in GROUPS for o, n in sorted(reg.aliases[kind].items())]
    if old:
        print("Former names (they work for one release, with a DeprecationWarning): " + ", ".join(old))
    if not reg.problems:
        print("\nNo problems: every plugin loaded.")
        return 0
    print(f"\nProblems ({len(reg.problems)}): these were skipped, everything else works.")
    for p in reg.problems:
        version = f" {p.version}" if p.version else ""
        print(f"  {p.kind} {p.name!r} from {p.distribution}{version}: {p.error}")
    return 1
