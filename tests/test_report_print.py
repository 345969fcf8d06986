"""The stress-check report printed to PDF by real headless Chromium, and read back from the PDF.

Two reports are printed: a bolted bracket of our own (a plate held by two bolts, modelled as pins,
and loaded at its free end) made by ``stress_check_report(result)`` with nothing else, and the
demo's report. From the PDF's text and layout (pypdf) the tests check what a checker relies on
(common practice for a signed calculation): every page says "page N of M" and carries the title
and the revision; no figure is split across a page break (each is drawn once, wholly inside the
page's printable area); no table row is split (its first and last cells print on one page); a
table that runs on to another page repeats its header there; the text states the unit of every
input, holds no Python spelling of a support or load (``Fixed(``, ``Traction(``, ``=None``), and
carries the sign-off block and the versions.

Equilibrium of the bracket (common practice, statics): the two bolts carry the end load, their
reactions add up to it.
"""
from __future__ import annotations

import re
import shutil
import subprocess
import unicodedata

import numpy as np
import pytest

import planar
from planar.post import stress_check_report, write_report
from planar.post.report import Figure, KeyValues, Table
from planar.post.inputs import input_rows

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")
try:
    import pypdf
except ImportError:  # the print tests skip; the content tests run
    pypdf = None

#: the printed page margins of the report's style sheet (18 mm top, 15 mm sides, 17 mm bottom), in points
MM = 72.0 / 25.4
FORBIDDEN = ("Fixed(", "Roller(", "Traction(", "Pressure(", "PointForce(", "Pin(", "PinLoad(", "=None", "Isotropic(")


def print_pdf(html_path, tmp_path):
    """Print a local HTML file to PDF with headless Chromium; skip when it is not installed."""
    if CHROMIUM is None:
        pytest.skip("chromium is not installed (apt-get install chromium); CI installs it")
    pdf = tmp_path / (html_path.stem + ".pdf")
    cmd = [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--no-first-run", "--disable-extensions",
           "--disable-background-networking", "--disable-component-update", "--disable-sync",
           f"--user-data-dir={tmp_path / 'chromium-profile'}", "--no-pdf-header-footer",
           f"--print-to-pdf={pdf}", html_path.resolve().as_uri()]
    proc = subprocess.run(cmd, capture_output=True, text=True, timeout=120)
    assert pdf.exists() and pdf.stat().st_size > 0, f"chromium printed no PDF (exit {proc.returncode}): " \
                                                    f"{proc.stderr[-2000:]}"
    return pdf


def _norm(text: str) -> str:
    return re.sub(r"\s+", " ", unicodedata.normalize("NFKC", text)).strip()


def read_pdf(path):
    """Per page: its normalised text, its size, and the boxes (x0, y0, x1, y1) of the images drawn on it."""
    if pypdf is None:
        pytest.skip("pypdf reads the printed PDF (pip install pypdf; the test extras have it)")
    reader = pypdf.PdfReader(str(path))
    pages = []
    for page in reader.pages:
        boxes, stack, ctm = [], [], [np.eye(3)]

        def before(op, args, cm, tm):
            if op == b"q":
                stack.append(ctm[0].copy())
            elif op == b"Q" and stack:
                ctm[0] = stack.pop()
            elif op == b"cm":
                a, b, c, d, e, f = (float(v) for v in args)
                ctm[0] = np.array([[a, b, 0], [c, d, 0], [e, f, 1]]) @ ctm[0]
            elif op == b"Do":
                name = args[0]
                xobj = page["/Resources"]["/XObject"][name].get_object()
                if xobj.get("/Subtype") == "/Image":
                    corners = np.array([[0, 0, 1], [1, 0, 1], [0, 1, 1], [1, 1, 1]]) @ ctm[0]
                    boxes.append((corners[:, 0].min(), corners[:, 1].min(), corners[:, 0].max(), corners[:, 1].max()))

        page.extract_text(visitor_operand_before=before)
        box = page.mediabox
        pages.append({"text": _norm(page.extract_text()), "width": float(box.width), "height": float(box.height),
                      "images": boxes})
    return pages


def _cells(block) -> list[list[str]]:
    if isinstance(block, Table):
        return [[str(c) for c in r] for r in block.rows]
    if isinstance(block, KeyValues):
        return [[str(k), str(v)] for k, v in block.rows]
    return []


def check_pages(pages, title: str, revision: str, captions) -> None:
    """Every page numbered "page N of M" with the title and revision; each figure drawn once, whole, inside the
    printable area, on the page of its caption (``captions`` in document order)."""
    n = len(pages)
    assert n >= 2
    title, revision = _norm(title), f"revision {revision}" if revision else "revision -"
    for i, p in enumerate(pages, 1):
        assert f"page {i} of {n}" in p["text"], f"page {i} has no page number"
        assert title in p["text"] and revision in p["text"], f"page {i} lacks the title or the revision"
    drawn = [(k, box) for k, p in enumerate(pages) for box in p["images"]]
    assert len(drawn) == len(captions), f"{len(captions)} figures but {len(drawn)} images drawn: one is split"
    drawn.sort(key=lambda kb: (kb[0], -kb[1][3]))  # in reading order: page, then top down
    for caption, (k, (x0, y0, x1, y1)) in zip(captions, drawn):
        w, h = pages[k]["width"], pages[k]["height"]
        assert x0 >= 15 * MM - 1 and x1 <= w - 15 * MM + 1, f"a figure on page {k + 1} runs past the side margins"
        assert y0 >= 17 * MM - 1 and y1 <= h - 18 * MM + 1, f"a figure on page {k + 1} runs past a page break"
        caption = _norm(caption)[:50]
        assert caption in pages[k]["text"], f"the caption {caption!r} is not on the page of its figure ({k + 1})"


def check_printed(report, pages) -> None:
    """The print-layout checks shared by both reports (see the module notes)."""
    figures = [b for s in report.sections for b in s.blocks if isinstance(b, Figure)]
    check_pages(pages, report.title, report.revision, [f.caption for f in figures])
    # table rows: the first and the last cell of a row print on one page (pieces found once in the document)
    text = [p["text"] for p in pages]
    checked = 0
    for sec in report.sections:
        for block in sec.blocks:
            head = _norm(" ".join(block.headers)) if isinstance(block, Table) else ""
            row_pages = set()
            for row in _cells(block):
                first, last = _norm(row[0])[:40], _norm(row[-1])[-40:]
                if len(first) < 6 or len(last) < 6:
                    continue
                on_first = [k for k, t in enumerate(text) if first in t]
                on_last = [k for k, t in enumerate(text) if last in t]
                if len(on_first) != 1 or len(on_last) != 1:
                    continue  # not unique in the document: this row cannot be located
                checked += 1
                assert on_first == on_last, f"row {row[0]!r} is split across pages {on_first[0] + 1} and " \
                                            f"{on_last[0] + 1}"
                row_pages.add(on_first[0])
            if head and len(row_pages) > 1:  # a table that runs on repeats its header on every page it spans
                for k in row_pages:
                    assert head in text[k], f"table {block.caption[:40]!r} has no header on page {k + 1}"
    assert checked >= 10, f"only {checked} rows could be located in the PDF"


def check_words(report, pages, model) -> str:
    """Text checks: inputs with their units, no Python spellings, the sign-off block, the versions."""
    whole = " ".join(p["text"] for p in pages)
    for bad in FORBIDDEN:
        assert bad not in whole, f"the PDF prints Python code: {bad!r}"
    for label, value in input_rows(model):
        assert _norm(value) in whole, f"input {label!r} is not printed in full: {value!r}"
    units = model.unit_system
    for k, sec in enumerate([model.section(r) for r in model.mesh.region_names()]):
        assert f"E = {sec.material.E:.6g} {units.stress}" in whole
        assert f"{sec.thickness:.6g} {units.length}" in whole
    for words in ("Sign-off", "prepared by", "checked by", "approved by", "revision", "signature"):
        assert words in whole
    from planar import __version__

    for words in (f"planar {__version__}", "gmsh ", "numpy ", "scipy ", "solver back end", "SHA-256 of the script",
                  "date written"):
        assert words in whole, f"the PDF lacks {words!r}"
    return whole


# ---------------------------------------------------------------------------------------- a bolted bracket
def bolted_bracket():
    """A 120 x 40 x 4 mm aluminium bracket held by two 8 mm bolts (pins with spreading ties) near its left end
    and pushed down by 5 MPa of shear traction on its right end (800 N)."""
    from planar.core.pins import Pin
    from planar.geometry import Circle, Plate, Refine, mesh

    plate = (Plate.rectangle(120.0, 40.0, centre=(60.0, 20.0))
             .cut(Circle((15.0, 20.0), 4.0, name="bolt_a"))
             .cut(Circle((45.0, 20.0), 4.0, name="bolt_b")))
    m = mesh(plate, size=6.0, element="T6", seed=1, refine=[Refine("bolt_a", size=1.5), Refine("bolt_b", size=1.5)])
    model = planar.Model(m, planar.Isotropic(E=71e3, nu=0.33, name="aluminium alloy sheet"), thickness=4.0,
                         units="N, mm, MPa")
    model.add_pin(Pin("bolt_a", tie="spreading"))
    model.add_pin(Pin("bolt_b", tie="spreading"))
    model.add_load(planar.Traction("right", ty=-5.0), case="end load")
    return planar.solve(model)["end load"]


@pytest.fixture(scope="module")
def bracket():
    return bolted_bracket()


# ---------------------------------------------------------------------------------------- the lug sample
#: the mooring lug of samples/lug_check.py: 12 mm steel, 60 mm wide, a 25 mm hole 45 mm from the end, a shackle pin
#: with 0.03 mm radial clearance pulling 50 kN along the lug, welded along its base (N, mm, MPa)
WIDTH, HOLE_D, EDGE, THICK, FORCE, CLEARANCE = 60.0, 25.0, 45.0, 12.0, 50e3, 0.03


@pytest.mark.slow
def test_lug_report_prints_with_page_numbers_whole_rows_and_figures(tmp_path):
    from planar.core.pins import TIES, Pin, PinLoad
    from planar.geometry import Refine, lug, mesh
    from planar.post import lug_check

    tie = "contact" if "contact" in TIES else "spreading"
    m = mesh(lug(WIDTH, HOLE_D, EDGE, end="square"), size=6.0, element="T6",
             refine=[Refine("hole", size=0.9, growth=1.25)])
    model = planar.Model(m, planar.Isotropic(E=205e3, nu=0.29), thickness=THICK, units="N, mm, MPa")
    model.add_support(planar.Fixed("base"))
    model.add_pin(Pin("hole", tie=tie, hold=None, name="pin", **({"clearance": CLEARANCE} if tie == "contact" else {})))
    model.add_load(PinLoad("pin", fy=FORCE), case="pull")
    r = planar.solve(model)["pull"]
    check = lug_check(r, FORCE, WIDTH, HOLE_D, THICK, edge_distance=EDGE, tension_allowable=355.0,
                      bearing_allowable=530.0, factor_of_safety=1.5)
    # the lug's nominal stresses (common practice): net section P / ((W - D) t), bearing P / (D t)
    assert check.net_section == pytest.approx(FORCE / ((WIDTH - HOLE_D) * THICK))
    assert check.bearing == pytest.approx(FORCE / (HOLE_D * THICK))
    report = stress_check_report(r, checks=[check], nominal=check.net_section, allowable=355.0,
                                 factor_of_safety=1.5, title="Mooring lug ML-12, 50 kN pull", revision="A")
    html = write_report(tmp_path / "lug.html", report)
    pages = read_pdf(print_pdf(html, tmp_path))
    check_printed(report, pages)
    whole = check_words(report, pages, r.model)
    assert "revision A" in whole and "load on pin 'pin': fx = 0 N, fy = 50000 N" in whole
    from planar.post import hot_spots

    spots = hot_spots(r, nominal=check.net_section, allowable=355.0, factor_of_safety=1.5)
    assert f"{spots[0].value:.4g} MPa" in pages[0]["text"]  # the summary shows the highest spot, flagged or not
    assert "net-section tension P / ((W - D) t)" in whole and "Kt, " in whole and "margin of safety" in whole
    if tie == "contact":
        assert "Contact" in whole and "radial clearance 0.03 mm" in whole
    caution = "No buckling, fatigue, fracture or plasticity check has been made."
    assert whole.count(caution) == 1                     # the cautions once, not after each check


@pytest.mark.slow
def test_bracket_report_prints_with_page_numbers_whole_rows_and_figures(tmp_path, bracket):
    r = bracket
    # statics (common practice): the two bolts carry the 5 MPa x 40 mm x 4 mm = 800 N end load
    recs = {rec.name: rec for rec in r.support_reactions()}
    assert recs["bolt_a"].force[1] + recs["bolt_b"].force[1] == pytest.approx(800.0, rel=1e-9)
    # lever rule about bolt_a (x = 15): bolt_b at x = 45 carries 800 x (120 - 15) / 30 = 2800 N up
    assert recs["bolt_b"].force[1] == pytest.approx(2800.0, rel=1e-6)
    report = stress_check_report(r)                      # nothing else: the complete check
    html = write_report(tmp_path / "bracket.html", report)
    pages = read_pdf(print_pdf(html, tmp_path))
    check_printed(report, pages)
    whole = check_words(report, pages, r.model)
    assert "revision -" in whole                         # no revision given: a dash, and blank sign-off lines
    assert "pin 'bolt_a' tied to edge 'bolt_a' by a spreading tie" in whole and "-5 MPa along y" in whole
    for title in ("Summary", "What was analysed", "Mesh", "Results", "Hot spots", "Equilibrium", "Run details"):
        assert title in whole
    assert "worst aspect ratio" in whole and "smallest Jacobian ratio" in whole and "smallest corner angle" in whole
    assert "bolt_a pin (spreading tie)" in whole         # a reaction per pin
    assert "moment about (0, 0) [N mm]" in whole         # and the moment row of the equilibrium
    caution = "No buckling, fatigue, fracture or plasticity check has been made."
    assert whole.count(caution) == 1                     # the cautions once


@pytest.mark.slow
def test_signed_report_says_who_and_which_revision(tmp_path, bracket):
    report = stress_check_report(bracket, title="Bracket BR-7 <bolted>", allowable=290.0, factor_of_safety=1.5,
                                 nominal=10.0, prepared_by="A. Writer", checked_by="B. Reader",
                                 approved_by="C. Boss", revision="C", signed_date="2026-12-01",
                                 omit=["results"])
    html = write_report(tmp_path / "signed.html", report)
    pages = read_pdf(print_pdf(html, tmp_path))
    check_printed(report, pages)
    whole = check_words(report, pages, bracket.model)
    for words in ("prepared by A. Writer", "checked by B. Reader", "approved by C. Boss", "revision C",
                  "Bracket BR-7 <bolted>", "margin of safety", "Kt, "):
        assert words in whole, words
    assert "Extremes of the stresses" not in whole


def test_the_print_checks_can_fail():
    """The checks above are not vacuous: a missing page number, a figure cut by a page break, a caption torn
    from its figure and a row split over two pages each fail them."""
    from planar.post.report import Report, Section

    rows = [[f"row number {i} first", f"row number {i} last"] for i in range(12)]
    rep = Report("T check", sections=[Section("s", [Table(["head A", "head B"], rows),
                                                    Figure(b"\x89PNG\r\n\x1a\n", "the figure caption here")])],
                 revision="A")
    body = " ".join(" ".join(r) for r in rows)

    def pages(third_page_number="page 2 of 2", image=(60.0, 100.0, 500.0, 400.0), caption_page=0, split=False):
        a = f"T check revision A page 1 of 2 head A head B {body} the figure caption here"
        b = f"T check revision A {third_page_number}"
        if split:
            a, b = a.replace("row number 3 last", ""), b + " row number 3 last"
        if caption_page == 1:
            a, b = a.replace("the figure caption here", ""), b + " the figure caption here"
        return [{"text": a, "width": 595.0, "height": 842.0, "images": [image]},
                {"text": b, "width": 595.0, "height": 842.0, "images": []}]

    check_printed(rep, pages())                          # a sound print passes
    for bad, words in ((pages("page two"), "page number"), (pages(image=(60.0, 20.0, 500.0, 400.0)), "page break"),
                       (pages(caption_page=1), "caption"), (pages(split=True), "split")):
        with pytest.raises(AssertionError, match=words):
            check_printed(rep, bad)


# ---------------------------------------------------------------------------------------- the demo
@pytest.mark.slow
def test_demo_report_prints_with_page_numbers_whole_rows_and_figures(tmp_path, monkeypatch):
    import planar.post.report as report_module
    from planar.demo import SpliceStrap, run_demo

    made = []
    build = report_module.stress_check_report
    monkeypatch.setattr(report_module, "stress_check_report",
                        lambda result, **kw: made.append((result, build(result, **kw))) or made[-1][1])
    out = run_demo(tmp_path / "demo", part=SpliceStrap(sizes=(3.2, 2.4, 1.8)), verbose=False)
    result, report = made[0]
    pages = read_pdf(print_pdf(out.files["report"], tmp_path))
    check_printed(report, pages)
    whole = check_words(report, pages, result.model)
    for words in ("thickness, region 'plate' 3 mm", "traction on edge 'right': 40 MPa along x",
                  "edge 'left' clamped", "not in the asymptotic range"):
        assert words in whole, words


# ---------------------------------------------------------------------------------------- content, no browser
def test_every_built_in_support_and_load_in_plain_words_with_units():
    from planar.core.pins import Pin, PinLoad
    from planar.core.units import unit_system
    from planar.post.inputs import describe_load, describe_material, describe_pin, describe_support, short_name

    u = unit_system("N, mm, MPa")
    said = {
        describe_support(planar.Fixed("left"), u): "edge 'left' clamped: both displacements held (ux = uy = 0)",
        describe_support(planar.Roller("left", fixed="x"), u): "edge 'left' on rollers: ux held (= 0), free to move "
                                                               "along y",
        describe_support(planar.Symmetry("bottom"), u): "edge 'bottom' a line of symmetry: the displacement normal "
                                                        "to it held, free to slide along it",
        describe_support(planar.Prescribed("right", ux=0.1), u): "edge 'right': ux = 0.1 mm prescribed, uy free",
        describe_support(planar.Fixed((0.0, 10.0)), u): "the point (0, 10) mm clamped: both displacements held "
                                                        "(ux = uy = 0)",
        describe_load(planar.Traction("right", tx=40.0), u): "traction on edge 'right': 40 MPa along x",
        describe_load(planar.Traction("hole", normal=-5.0), u): "traction on edge 'hole': -5 MPa normal to the edge "
                                                                "(positive pulls outward)",
        describe_load(planar.Pressure("top", 2.5), u): "pressure on edge 'top': 2.5 MPa (positive pushes on the edge)",
        describe_load(planar.PointForce("tip", fy=-100.0), u): "point force at point 'tip': fx = 0 N, fy = -100 N",
        describe_load(planar.BodyForce(by=-1e-5), u): "body force per unit volume: bx = 0 N/mm^3, by = -1e-05 "
                                                      "N/mm^3, in the whole plate",
        describe_load(PinLoad("hole", fy=-1000.0, moment=50.0), u): "load on pin 'hole': fx = 0 N, fy = -1000 N, "
                                                                    "moment 50 N mm (counter-clockwise positive)",
        describe_pin(Pin("hole", hold="x", at=(5.0, 0.0)), u): "pin 'hole' tied rigidly to edge 'hole' (the edge "
                                                               "moves with the pin as a rigid body) about (5, 0) mm; "
                                                               "held along x, free along y; free to turn",
        describe_material(planar.Isotropic(E=205e3, nu=0.29, density=7.85e-9), u):
            "isotropic: E = 205000 MPa, nu = 0.29, density = 7.85e-09 t/mm^3",
        short_name(planar.Fixed("left"), u): "clamp on edge 'left'",
    }
    for got, want in said.items():
        assert got == want
    for text in said:
        assert not any(bad in text for bad in FORBIDDEN)


def test_mesh_quality_of_known_shapes():
    """Exact figures (geometry): an equilateral triangle has aspect ratio 1 and 60 deg corners; a right triangle
    with legs 10 and 1 has aspect ratio L P / (4 sqrt(3) A) (Frey and George, Mesh Generation, 2000) and angles
    atan(1/10) and 90 deg; a 2 x 1 rectangle has side ratio 2; a trapezoid Q4 with parallel sides 2 and 1 and
    height 1 has det J linear in eta, from (1 + 2) / ... : the ratio of its smallest to largest value, 1 / 2."""
    from planar.core.mesh import Mesh
    from planar.post.meshquality import mesh_quality

    s3 = np.sqrt(3.0)
    q = mesh_quality(Mesh(np.array([[0, 0], [1, 0], [0.5, s3 / 2]]), {"T3": np.array([[0, 1, 2]])}))
    assert q.worst_aspect == pytest.approx(1.0) and q.min_angle == pytest.approx(60.0) == q.max_angle
    q = mesh_quality(Mesh(np.array([[0, 0], [10, 0], [0, 1.0]]), {"T3": np.array([[0, 1, 2]])}))
    L, P, A = np.hypot(10, 1), 11 + np.hypot(10, 1), 5.0
    assert q.worst_aspect == pytest.approx(L * P / (4 * s3 * A))
    assert q.min_angle == pytest.approx(np.degrees(np.arctan(0.1))) and q.max_angle == pytest.approx(90.0)
    assert q.counts["aspect"] == 1 and q.counts["small angle"] == 1
    q = mesh_quality(Mesh(np.array([[0, 0], [2, 0], [2, 1], [0, 1.0]]), {"Q4": np.array([[0, 1, 2, 3]])}))
    assert q.worst_aspect == pytest.approx(2.0) and q.min_jacobian_ratio == pytest.approx(1.0)
    # trapezoid: bottom 2 wide, top 1 wide; det J = (1.5 - 0.5 eta) / 4 ... the width at eta: 1.5 - 0.5 eta
    q = mesh_quality(Mesh(np.array([[0, 0], [2, 0], [1.5, 1], [0.5, 1.0]]), {"Q4": np.array([[0, 1, 2, 3]])}))
    assert q.min_jacobian_ratio == pytest.approx(1.0 / 2.0)


def test_convergence_verdict_joints_and_omitted_sections(bracket):
    from planar.post import grid_convergence
    from planar.post.report import render_html

    from planar.core.errors import DiscretisationWarning

    with pytest.warns(DiscretisationWarning, match="not in the asymptotic range"):  # oscillating values
        wild = grid_convergence([100.0, 90.0, 95.0, 70.0], sizes=[1.0, 2.0, 4.0, 8.0], name="peak", unit="MPa")
    # h halves each time, the change falls by 2^2: second order, in the asymptotic range (Roache 1998)
    tame = grid_convergence([100.0, 99.0, 95.0], sizes=[1.0, 2.0, 4.0], name="peak", unit="MPa")
    assert tame.asymptotic and not wild.asymptotic
    html = render_html(stress_check_report(bracket, convergence=[tame, wild], picture=False, results=[],
                                           hot_spots=False))
    assert "not in the asymptotic range" in html and "none claimed" in html
    assert tame.verdict in html and "Richardson extrapolation" in html
    assert "Hot spots" not in html and "The model as analysed" not in html
    from planar.post import kt, margin_of_safety
    from planar.post.scope import CAUTION, CAUTIONS

    k, ms = kt(bracket, 10.0), margin_of_safety(bracket, 290.0, 1.5)
    assert CAUTION in k.summary() and CAUTION in ms.summary()   # each check says it on its own ...
    html = render_html(stress_check_report(bracket, checks=[k, ms], picture=False, results=[], hot_spots=False))
    assert CAUTION not in html and html.count(CAUTIONS[1]) == 1  # ... the report says it once
    assert "Kt" in html and "margin" in html
    rep = stress_check_report(bracket, omit=["mesh", "equilibrium"], picture=False, results=[])
    titles = [s.title for s in rep.sections]
    assert "Mesh" not in titles and "Equilibrium" not in titles and titles[-1] == "Sign-off"
    with pytest.raises(planar.core.errors.NameNotFoundError, match="report section"):
        stress_check_report(bracket, omit=["meshes"])
    old = stress_check_report(bracket, title="old call", headline=[("peak", "1 MPa", "", "")], results=[],
                              picture=False)                                   # the former signature still works
    assert old.title == "old call" and old.sections[0].blocks[0].items == [("peak", "1 MPa", "", "")]


def test_joint_and_contact_tables_state_their_units():
    from test_joints import lap

    jr = planar.solve(lap(2, 2.0, 3.2, 3e-5))["pull"]
    from planar.post.report import render_html

    rep = stress_check_report(jr.layers["top"], joints=jr, results=[], hot_spots=False)
    html = render_html(rep)
    assert "The model as analysed" in html
    assert "Joints and fasteners" in html and "bearing stress P/(d t) [MPa]" in html and "shear [N]" in html
    assert "row 1" in html or ">row<" in html
    from planar.core.pins import Pin, PinLoad, TIES

    if "contact" not in TIES:
        pytest.skip("this planar has no contact pins")
    from planar.geometry import Circle, Plate, mesh

    m = mesh(Plate.rectangle(60.0, 30.0, centre=(0.0, 0.0)).cut(Circle((10.0, 0.0), 5.0, name="hole")), size=2.5,
             element="Q8", seed=1)
    model = planar.Model(m, planar.Isotropic(E=70e3, nu=0.33), thickness=2.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    model.add_pin(Pin("hole", tie="contact", hold=None, name="pin"))
    model.add_load(PinLoad("pin", fx=1000.0), case="pull")
    r = planar.solve(model)["pull"]
    html = render_html(stress_check_report(r, picture=False, results=[], hot_spots=False))
    assert "Contact" in html and "peak pressure [MPa]" in html and "force on the part [N]" in html
    assert "bearing on edge &#x27;hole&#x27; where it touches" in html
    st = r.contact_states["pin"]
    # statics: the pin passes its whole load to the part through contact
    assert st.force[0] == pytest.approx(1000.0, rel=1e-6)


def test_plugin_loads_say_themselves_and_combinations_are_named():
    from planar.core.loads import LoadKind
    from planar.core.units import unit_system
    from planar.post.inputs import describe_load
    from planar.post import combine
    from planar.post.report import render_html

    class Quiet(LoadKind):  # a plugin load with no plain words: its kind and describe()
        name = "quiet-load"

        def describe(self):
            return "a load of its own kind"

    class Plain(Quiet):
        def describe_plain(self, units):
            return f"a load of 3 {units.unit_of('force')}"

    u = unit_system("N, mm, MPa")
    assert describe_load(Quiet(), u) == "quiet-load: a load of its own kind"
    assert describe_load(Plain(), u) == "a load of 3 N"
    mesh = planar.rectangle_mesh(100.0, 20.0, 10, 2, "Q8")
    model = planar.Model(mesh, planar.Isotropic(E=70e3, nu=0.33), thickness=2.0, units="N, mm, MPa")
    model.add_support(planar.Fixed("left"))
    model.add_load(planar.Traction("right", ty=-2.0), case="shear")
    model.add_load(planar.PointForce("corner_11", fx=50.0), case="pull")
    res = planar.solve(model)
    html = render_html(stress_check_report(combine(res, {"shear": 1.35, "pull": 1.5}, name="ultimate"),
                                           picture=False, results=[]))
    assert "ultimate = 1.35 x shear + 1.5 x pull" in html
    from planar.post import Combination

    html = render_html(stress_check_report(res["shear"], picture=False, results=[], hot_spots=False,
                                           combinations=[Combination("service", {"shear": 1.0, "pull": -1.0})],
                                           page="Letter"))
    assert "service = 1 x shear - 1 x pull" in html and "size: 8.5in 11in" in html
    with pytest.raises(planar.core.errors.InputError, match="page size"):
        render_html(stress_check_report(res["shear"], picture=False, results=[], hot_spots=False, page="B7"))
    assert "point force at point &#x27;corner_11&#x27;: fx = 50 N, fy = 0 N" in html
    assert not [bad for bad in FORBIDDEN if bad.replace("'", "&#x27;") in html]
    from planar.core.registry import registry

    if "pin-bearing" in registry().names("load"):  # the example plugin says itself in plain words
        from planar.core.registry import load_kind

        text = describe_load(load_kind("pin-bearing")("hole", 40e3, angle=90.0), u)
        assert text.startswith("pin bearing on edge 'hole': 40000 N at 90 deg from x")


@pytest.mark.slow
def test_a_long_table_repeats_its_header_and_keeps_its_rows_whole(tmp_path):
    """A table longer than a page runs on with its header repeated; rows with wrapped cells are not split."""
    import struct
    import zlib

    from planar.post.report import Paragraph, Report, Section, SignOff

    def chunk(kind, data):
        return struct.pack(">I", len(data)) + kind + data + struct.pack(">I", zlib.crc32(kind + data) & 0xFFFFFFFF)

    w, h = 480, 320  # a plain PNG (PNG specification, W3C 2003): grey RGB rows, each with filter byte 0
    png = (b"\x89PNG\r\n\x1a\n" + chunk(b"IHDR", struct.pack(">IIBBBBB", w, h, 8, 2, 0, 0, 0))
           + chunk(b"IDAT", zlib.compress((b"\x00" + b"\x80\xa0\xc0" * w) * h)) + chunk(b"IEND", b""))
    words = "a long remark that wraps over several lines of its cell to make the row tall " * 3
    rows = [[f"station {i:03d} start", f"{i * 1.5:.1f}", f"{words} end of station {i:03d}"] for i in range(60)]
    rep = Report("Long table check", sections=[
        Section("Stations", [Paragraph("intro"), Table(["station", "value [MPa]", "remark"], rows,
                                                       caption="Stations along the edge")]),
        Section("Pictures", [Figure(png, f"picture {k} of the part") for k in range(3)]),
        Section("Sign-off", [SignOff()])], revision="D")
    html = write_report(tmp_path / "long.html", rep)
    pages = read_pdf(print_pdf(html, tmp_path))
    check_printed(rep, pages)
    spanned = [k for k, p in enumerate(pages) if "station 0" in p["text"]]
    assert len(spanned) >= 3                                 # the table runs over several pages ...
    for k in spanned:
        assert "station value [MPa] remark" in pages[k]["text"]  # ... with its header on each
