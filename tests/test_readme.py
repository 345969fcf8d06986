"""The README's Python examples run as written (common practice: documentation that is tested)."""
import re
from pathlib import Path

import pytest

README = Path(__file__).resolve().parents[1] / "README.md"


def _blocks():
    return re.findall(r"```python\n(.*?)```", README.read_text(), flags=re.S)


def test_readme_has_job_paragraph_and_two_commands():
    text = README.read_text()
    first_block = re.search(r"```sh\n(.*?)```", text, flags=re.S).group(1)
    lines = [l for l in first_block.splitlines() if l.strip()]
    assert len(lines) == 2
    assert "pytest" in lines[1]


@pytest.mark.parametrize("i", range(len(_blocks())))
def test_readme_example_runs(i, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    exec(compile(_blocks()[i], f"README block {i}", "exec"), {})
