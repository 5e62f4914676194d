"""Print the lowest versions pyproject.toml allows, one ``name==version`` a line, for the minimum-versions CI step.

Usage: ``python .ci/min_versions.py [EXTRA | EXTRA:NAME,NAME ...]``: the run-time dependencies, then those
of each named optional extra (``test``, ``data``, ...), or only the named packages of an extra
(``test:pytest,hypothesis``). Every requirement must give a lower bound (``>=``); one that
does not is an error, so a new dependency cannot slip past this step unpinned.
"""

from __future__ import annotations

import re
import sys
import tomllib
from pathlib import Path

_REQUIREMENT = re.compile(r"^\s*(?P<name>[A-Za-z0-9][A-Za-z0-9._-]*)(?P<extras>\[[^\]]*\])?\s*(?P<spec>[^;]*)")


def lowest(requirement: str) -> str:
    """``name[extras]==lower`` for one requirement string of pyproject.toml."""
    match = _REQUIREMENT.match(requirement)
    if match is None:
        raise SystemExit(f"min_versions: cannot read requirement {requirement!r}")
    bounds = [part.strip()[2:].strip() for part in match["spec"].split(",") if part.strip().startswith(">=")]
    if len(bounds) != 1:
        raise SystemExit(f"min_versions: requirement {requirement!r} needs exactly one lower bound (>=)")
    return f"{match['name']}{match['extras'] or ''}=={bounds[0]}"


def main(extras: list[str]) -> int:
    project = tomllib.loads((Path(__file__).resolve().parents[1] / "pyproject.toml").read_text("utf-8"))["project"]
    optional = project.get("optional-dependencies", {})
    requirements = list(project["dependencies"])
    for argument in extras:
        extra, _, names = argument.partition(":")
        if extra not in optional:
            raise SystemExit(f"min_versions: no optional extra {extra!r}; known: {sorted(optional)}")
        chosen = optional[extra]
        if names:
            wanted = {name.strip().lower() for name in names.split(",")}
            chosen = [r for r in chosen if _REQUIREMENT.match(r)["name"].lower() in wanted]
            found = {_REQUIREMENT.match(r)["name"].lower() for r in chosen}
            if wanted - found:
                raise SystemExit(f"min_versions: extra {extra!r} does not list {sorted(wanted - found)}")
        requirements += chosen
    seen = set()
    for requirement in requirements:
        pin = lowest(requirement)
        if pin.lower() not in seen:
            seen.add(pin.lower())
            print(pin)
    return 0


if __name__ == "__main__":
    sys.exit(main(sys.argv[1:]))
