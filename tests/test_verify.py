"""The benchmark suite (`planar verify`) passes, with the record keys the tools read.

The sources of every reference value are named in the records themselves (planar/verify/*_cases.py):
MacNeal and Harder 1985; Cook 1974; Timoshenko and Goodier 1970 art. 21; Strang and Fix 1973.
"""
import json

import pytest

from planar.cli import main
from planar.verify import run

KEYS = {"case", "element", "quantity", "reference", "computed", "rel_error", "tolerance", "dofs", "source", "passed"}


@pytest.mark.parametrize("case", ["patch-test", "axial-bar", "cantilever-tip", "cook-membrane", "energy-rate"])
def test_core_cases_pass(case):
    records = run(case_names=[case])
    assert records
    bad = [(r.element, r.quantity, r.computed, r.reference) for r in records if not r.passed]
    assert not bad
    assert all(r.source.strip() for r in records)


def test_cli_json_records(tmp_path, capsys):
    out = tmp_path / "out.json"
    code = main(["verify", "--case", "patch-test", "--case", "axial-bar", "--json", str(out), "--quiet"])
    assert code == 0
    recs = json.loads(out.read_text())
    assert recs and all(KEYS <= set(r) for r in recs)
    assert {r["element"] for r in recs} == {"T3", "T6", "Q4", "Q8", "Q9"}
    assert "checks passed" in capsys.readouterr().out


def test_verify_element_option_and_unknown_element(capsys):
    assert main(["verify", "--element", "Q8", "--case", "patch-test", "--quiet"]) == 0
    assert main(["verify", "--element", "Q7"]) == 2
    err = capsys.readouterr().err
    assert "unknown element type 'Q7'" in err and "'Q8'" in err
