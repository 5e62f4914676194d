"""The Python examples in the README run as written (they are part of the documentation)."""

from __future__ import annotations

import re
from pathlib import Path

import pytest

README = Path(__file__).resolve().parents[2] / "README.md"
BLOCKS = re.findall(r"```python\n(.*?)```", README.read_text(encoding="utf-8"), re.S)


@pytest.mark.parametrize("code", BLOCKS, ids=[f"block{k}" for k in range(len(BLOCKS))])
def test_readme_python_example_runs(code, capsys):
    exec(compile(code, str(README), "exec"), {})
    assert capsys.readouterr().out.strip()


def test_readme_has_exactly_two_set_up_commands_at_the_top():
    top = README.read_text(encoding="utf-8").split("## ")[0]
    commands = re.findall(r"```bash\n(.*?)```", top, re.S)[0].strip().splitlines()
    assert len(commands) == 2 and "heatstack demo" in commands[0] and "pytest" in commands[1]
