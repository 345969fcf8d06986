"""Small items of the feature-check issue: load-case names on a typo, self-judging convergence
studies, and the ``planar verify`` table layout."""
from __future__ import annotations

import json

import pytest

import planar
from _models import strip_model
from planar import Traction
from planar.core.errors import NameNotFoundError


# ------------------------------------------------------------------ load-case names on a typo
def test_mistyped_load_case_lists_the_cases():
    """A mistyped case name raises planar's NameNotFoundError listing the cases (common practice:
    name errors say what exists); the returned mapping stays a plain dict."""
    res = planar.solve(strip_model(nx=4, ny=1, loads={"pull": Traction("right", tx=10.0),
                                                      "shear": Traction("right", ty=1.0)}))
    with pytest.raises(NameNotFoundError) as info:
        res["pul"]
    msg = str(info.value)
    assert "load case" in msg and "'pul'" in msg and "pull" in msg and "shear" in msg
    # still a KeyError for code that caught one, and still a dict
    with pytest.raises(KeyError):
        res["nope"]
    assert isinstance(res, dict) and list(res) == ["pull", "shear"]
    assert res.get("nope") is None and "pull" in res
    assert json.loads(json.dumps({k: v.n_dofs for k, v in res.items()})) == {"pull": res["pull"].n_dofs,
                                                                            "shear": res["shear"].n_dofs}
