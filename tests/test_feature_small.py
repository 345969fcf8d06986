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


# ------------------------------------------------------------------ convergence studies judge themselves
# Bands (P. J. Roache, Verification and Validation in Computational Science and Engineering, 1998:
# the GCI holds only in the asymptotic range): observed order in [0.5, q + 1] for degree-q elements,
# a monotone series, asymptotic ratio GCI_32 / (r^p GCI_21) in [0.9, 1.1].
import math  # noqa: E402
import warnings  # noqa: E402

import numpy as np  # noqa: E402

from planar.core.errors import DiscretisationWarning  # noqa: E402
from planar.post.convergence import convergence_study, grid_convergence  # noqa: E402


def _judged(values, **kw):
    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        g = grid_convergence(values, **kw)
    codes = [getattr(w.message, "code", None) for w in caught if issubclass(w.category, DiscretisationWarning)]
    return g, codes


def test_power_law_in_the_band_claims_its_gci():
    # f = 3 + 0.01 h^2 on ratio-2 grids: p = 2 exactly (Roache 1998), ratio ~ 1
    h = np.array([0.25, 0.5, 1.0])
    g, codes = _judged(3.0 + 0.01 * h**2, sizes=h)
    assert g.asymptotic and codes == [] and g.gci == pytest.approx(g.gci_fine)
    assert g.verdict == "in the asymptotic range" and "GCI fine" in g.table()


def test_order_above_p_plus_1_claims_no_gci(tmp_path):
    # the bracket: three nearly equal values give an order of 7 and a tiny band; for quadratic
    # elements no local quantity converges faster than h^3 (Roache 1998; q + 1 superconvergence)
    h = np.array([0.25, 0.5, 1.0])
    g, codes = _judged(100.0 + 0.5 * h**7, sizes=h, name="fillet peak")
    assert g.order == pytest.approx(7.0, abs=1e-9)
    assert g.gci is None and not g.asymptotic and codes == ["not-asymptotic"]
    assert "order 7" in g.verdict and "[0.5, 3]" in g.verdict
    text = g.table()
    assert "NO GCI CLAIMED" in text and "GCI fine" not in text
    assert g.plot(tmp_path / "c.png").stat().st_size > 0
    # the same numbers from elements of degree 6 are plausible
    g7, codes7 = _judged(100.0 + 0.5 * h**7, sizes=h, degree=6)
    assert g7.asymptotic and codes7 == []


def test_order_below_half_and_linear_band():
    h = np.array([0.25, 0.5, 1.0])
    g, codes = _judged(1.0 + 0.01 * h**0.3, sizes=h)       # slower than a crack's h^(1/2)
    assert g.gci is None and codes == ["not-asymptotic"] and "outside the plausible band" in g.verdict
    g1, codes1 = _judged(1.0 + 0.001 * h**2.5, sizes=h, degree=1)   # linear elements: at most h^2
    assert g1.gci is None and "[0.5, 2]" in g1.verdict
    g2, codes2 = _judged(1.0 + 0.001 * h**2.5, sizes=h, degree=2)
    assert g2.asymptotic and codes2 == []


def test_non_monotone_and_far_ratio_claim_no_gci():
    g, codes = _judged([1.0, 1.1, 0.95], sizes=[1.0, 0.5, 0.25])       # oscillatory
    assert g.gci is None and "not monotone" in g.verdict and codes == ["not-asymptotic"]
    # four meshes: the three finest are monotone, the coarsest turns back
    h = np.array([0.125, 0.25, 0.5, 1.0])
    v = 3.0 + 0.01 * h**2
    v[-1] = 2.9
    g4, _ = _judged(v, sizes=h)
    assert g4.kind == "monotonic" and g4.gci is None and "over all meshes" in g4.verdict
    # p = 2 exactly but 30 % changes: ratio (1 + C) / (1 + 4 C) = 0.79 is outside [0.9, 1.1]
    hh = np.array([1.0, 2.0, 4.0])
    gr, codes = _judged(1.0 + 0.1 * hh**2, sizes=hh)
    assert gr.order == pytest.approx(2.0) and gr.asymptotic_ratio == pytest.approx(1.1 / 1.4)
    assert gr.gci is None and "asymptotic ratio" in gr.verdict and codes == ["not-asymptotic"]


def test_study_takes_a_name_and_the_element_degree():
    from planar import rectangle_mesh

    meshes = [rectangle_mesh(100.0, 20.0, 2 * k, k, "Q4") for k in (2, 4, 8)]

    def tip(r):
        return float(np.abs(r.u[:, 1]).max())

    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        g = convergence_study(lambda m: strip_model(mesh=m, loads={"c": Traction("right", ty=1.0)}), meshes,
                              tip, name="tip deflection", unit="mm")
    assert g.name == "tip deflection" and "tip deflection [mm]" in g.table()
    assert g.order_band == (0.5, 2.0)       # Q4: degree 1
    assert math.isfinite(g.order)


# ------------------------------------------------------------------ `planar verify` layout
def test_verify_table_fits_120_columns_with_sources_as_footnotes():
    """Common practice for terminal tables: 120 columns, long references as numbered footnotes."""
    from planar.verify import check, format_table

    long_src = "P. J. Roache, Verification and Validation in Computational Science and Engineering, 1998; " * 6
    recs = [check("gci-bracket", "T6", "Richardson-extrapolated peak within its GCI band of 3 sigma_0 " * 2,
                  3.0, 3.001, 1e-3, 8450, long_src),
            check("energy-rate", "Q8", "energy-norm error rate", 1.9, 1.7, 0.05, 400, "Strang and Fix 1973",
                  at_least=True),
            check("energy-rate", "Q4", "energy-norm error rate", 0.9, 0.98, 0.0, 400, "Strang and Fix 1973",
                  at_least=True)]
    text = format_table(recs)
    lines = text.splitlines()
    assert max(map(len, lines)) <= 120
    assert "[1]" in lines[2] and any(ln.startswith("[1] P. J. Roache") for ln in lines)
    assert sum(ln.startswith("[2] Strang") for ln in lines) == 1          # each source once
    # lower bounds print as bounds with the shortfall, not "rel. error 0, tolerance 0"
    q8 = next(ln for ln in lines if ln.startswith("energy-rate  Q8"))
    q4 = next(ln for ln in lines if ln.startswith("energy-rate  Q4"))
    assert ">= 1.9" in q8 and "short 0.2" in q8 and "NO" in q8
    assert ">= 0.9" in q4 and "met" in q4 and "0.00e+00" not in q4 and "0.0e+00" not in q4
    assert recs[1].to_json()["bound"] is True


def test_verify_command_lines_fit(capsys):
    from planar.cli import main

    assert main(["verify", "--case", "energy-rate", "--case", "cook-membrane"]) == 0
    out = capsys.readouterr().out
    assert max(map(len, out.splitlines())) <= 120 and "sources:" in out and ">= " in out


# ------------------------------------------------------------------ no NaN coordinates in text
def test_margin_from_a_number_has_no_nan_location():
    """A margin of safety from a given peak (MS = allowable / (FS peak) - 1, common practice) has no
    location: its text says so instead of "(nan, nan)"."""
    from planar.post.checks import margin_of_safety

    m = margin_of_safety(200.0, allowable=276.0, factor_of_safety=1.15)
    assert m.margin == pytest.approx(0.2)
    assert "nan" not in m.summary().lower() and "a given value" in m.summary()
