"""The HTML stress-check report: self-contained, escaped, atomic, and rendered by a real browser.

The browser test opens the report in headless Chromium (Debian package ``chromium``; CI installs
it) and checks that the figures render (many distinct, saturated colours in the screenshot) and
that the page logs no console message (the report has no scripts, and its content-security policy
turns any attempt to load an outside resource into a console error).
Source of the expected values: equilibrium of a strip in tension, reaction = -applied load (common
practice).
"""
import base64
import re
import shutil
import subprocess

import numpy as np
import pytest

import planar
from _models import solved_strip
from planar.core.errors import InputError
from planar.post.plots import figure_png, plot_field
from planar.post.report import (CAUTIONS, Figure, KeyValues, Notice, Paragraph, Report, Section,
                                Table, Tiles, equilibrium_table, render_html, stress_check_report,
                                write_report)

CHROMIUM = shutil.which("chromium") or shutil.which("chromium-browser")


def _result():
    return solved_strip(80.0, 20.0, 16, 4, "Q8", units="N, mm, MPa", case="pull <&>",
                        loads={"pull <&>": planar.Traction("right", tx=60.0, ty=-3.0)})


def _report(result, title="Strap <check> & \"quotes\""):
    fig = plot_field(result, "von_mises", mesh_lines=True)
    return stress_check_report(
        result, title=title, subtitle="fictional test part",
        part=[("strap", "80 x 20 x 2 mm <no holes>")],
        headline=[("peak von Mises", "61.2 MPa", "at the clamp", ""), ("margin of safety", "+0.50", "", "pass")],
        results=[Figure(figure_png(fig), "von Mises stress <SPR>")],
        checks=[Table(["check", "value", "status"], [["margin of safety", "+0.50", "pass"],
                                                     ["Kt", "3.1", "fail"]], status_column=2)],
        run_rows=[("total time", "1.0 s")])


def browser_render(html_path, tmp_path, height=6000):
    """Screenshot of a local HTML file in headless Chromium, and its console lines.

    Returns (PIL image, console lines). Skips the test when Chromium is not installed.
    """
    if CHROMIUM is None:
        pytest.skip("chromium is not installed (apt-get install chromium); CI installs it")
    from PIL import Image

    shot = tmp_path / "shot.png"
    profile = tmp_path / "chromium-profile"
    cmd = [CHROMIUM, "--headless", "--no-sandbox", "--disable-gpu", "--disable-quic", "--no-first-run",
           "--disable-background-networking", "--disable-component-update", "--disable-sync",
           "--disable-extensions", "--hide-scrollbars", f"--user-data-dir={profile}",
           "--enable-logging=stderr", "--v=0", f"--screenshot={shot}", f"--window-size=1200,{height}",
           html_path.resolve().as_uri()]
    proc = subprocess.run(cmd, capture_output=True, text=True, timeout=120)
    assert shot.exists(), f"chromium wrote no screenshot (exit {proc.returncode}): {proc.stderr[-2000:]}"
    console = [ln for ln in proc.stderr.splitlines()
               if ":CONSOLE" in ln or "Uncaught" in ln or "Refused to" in ln or "net::ERR_" in ln]
    return Image.open(shot).convert("RGB"), console


def figure_pixels(img) -> tuple[int, int]:
    """(distinct colours, strongly coloured pixels) of a screenshot: text and rules are grey, the
    contour figures are saturated colour."""
    a = np.asarray(img).reshape(-1, 3).astype(np.int64)
    distinct = np.unique(a[:, 0] * 65536 + a[:, 1] * 256 + a[:, 2]).size
    saturated = int(np.count_nonzero(a.max(axis=1) - a.min(axis=1) > 60))
    return distinct, saturated


# ---------------------------------------------------------------------------------------- content
def test_text_is_escaped_and_nothing_external():
    r = _result()
    html = render_html(_report(r))
    assert "<check>" not in html and "Strap &lt;check&gt; &amp; &quot;quotes&quot;" in html
    assert "&lt;no holes&gt;" in html and "&lt;SPR&gt;" in html
    assert "pull &lt;&amp;&gt;" in html
    assert "<script" not in html.lower()
    refs = re.findall(r'(?:src|href)\s*=\s*"([^"]*)"', html)
    assert refs and all(u.startswith("data:image/png;base64,") for u in refs)
    assert not re.search(r"https?://", html)
    assert "img-src data:" in html            # content-security policy
    for u in refs:
        assert base64.b64decode(u.split(",", 1)[1])[:8] == b"\x89PNG\r\n\x1a\n"


def test_report_carries_the_cautions_model_and_equilibrium():
    r = _result()
    html = render_html(_report(r))
    for c in CAUTIONS:
        assert c.replace("'", "&#x27;") in html
    for words in ("No buckling, fatigue, fracture or plasticity check", "buckle a thin plate",
                  "qualified engineer", "which take precedence"):
        assert words in html
    assert "plane stress" in html and "N, mm, MPa" in html
    assert "edge &#x27;left&#x27; clamped: both displacements held" in html   # supports in plain words
    assert "Fixed(" not in html and "Traction(" not in html and "=None" not in html
    assert str(r.mesh.n_nodes) in html and str(r.n_dofs) in html
    t = equilibrium_table(r)
    # reactions balance the applied loads (common practice): sums are zero to round-off
    fx = float(t.rows[0][1])
    assert fx == pytest.approx(60.0 * 20.0 * 2.0, rel=1e-9)
    assert float(t.rows[0][2]) == pytest.approx(-fx, rel=1e-9)
    assert "pass" in t.caption
    assert html.count('class="status pass"') == 1 and html.count('class="status fail"') == 1


def test_blocks_render_and_bad_blocks_are_refused(tmp_path):
    rep = Report("t", sections=[Section("s", [Paragraph("a < b"), KeyValues([("k", 1)]),
                                             Tiles([("l", "v", "d", "fail")]),
                                             Notice(["n"], kind="note")])])
    html = render_html(rep)
    assert "a &lt; b" in html and 'class="tile fail"' in html and 'class="notice note"' in html
    with pytest.raises(InputError):
        render_html(Report("t", sections=[Section("s", ["plain string"])]))
    with pytest.raises(InputError, match="cells"):
        render_html(Report("t", sections=[Section("s", [Table(["a", "b"], [["1"]])])]))
    with pytest.raises(InputError, match="PNG"):
        render_html(Report("t", sections=[Section("s", [Figure(b"GIF89a", "x")])]))


@pytest.mark.slow
def test_write_report_is_atomic(tmp_path):
    r = _result()
    out = tmp_path / "report.html"
    out.write_text("old report")
    with pytest.raises(InputError):
        write_report(tmp_path / "report.pdf", _report(r))
    assert out.read_text() == "old report"
    write_report(out, _report(r))
    assert out.read_text().startswith("<!DOCTYPE html>")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["report.html"]


# ---------------------------------------------------------------------------------------- browser
@pytest.mark.slow
def test_report_renders_in_a_real_browser(tmp_path):
    r = _result()
    out = write_report(tmp_path / "report.html", _report(r))
    img, console = browser_render(out, tmp_path)
    assert console == [], "browser console messages:\n" + "\n".join(console)
    distinct, saturated = figure_pixels(img)
    assert distinct > 1000, f"only {distinct} colours: the figure did not render"
    assert saturated > 50_000, f"only {saturated} coloured pixels: the figure did not render"


@pytest.mark.slow
def test_browser_check_detects_a_broken_figure(tmp_path):
    """The check above is not vacuous: a figure that does not decode and an outside image fail it."""
    r = _result()
    html = render_html(_report(r))
    html = re.sub(r'src="data:image/png;base64,[^"]*"', 'src="https://example.invalid/fig.png"', html)
    bad = tmp_path / "bad.html"
    bad.write_text(html)
    img, console = browser_render(bad, tmp_path)
    assert console, "the blocked outside image was not reported on the console"
    assert figure_pixels(img)[1] < 50_000
