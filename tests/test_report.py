"""``lodeline report``: HTML and Markdown content, figures checked by parsing, escaping, --force,
and the print layout (A4 and Letter) when a headless Chromium is available."""

from __future__ import annotations

import html
import math
import re
import shutil
import subprocess
import xml.etree.ElementTree as ET
from html.parser import HTMLParser
from pathlib import Path

import numpy as np
import pytest

from lodeline.geo.bearings import format_declination
from lodeline.geo.cautions import CAUTIONS
from lodeline.geo.document import load_document
from lodeline.geo.north import convert_document
from lodeline.geo.report import (
    BODY_WIDTH_MM,
    build_report,
    collect_report,
    diagram_angle,
    render_html,
    render_markdown,
)
from lodeline.geo.survey import close_document, fit_document
from lodeline.tui.cli import main

DEMOS = sorted((Path(__file__).parents[1] / "demo_traverses").glob("*.toml"))
TARGET = "2026-06-01"
SVG_NS = "{http://www.w3.org/2000/svg}"
VOID = {"meta", "br", "hr", "img", "input", "link", "col", "area", "base", "wbr", "source"}
# SVG elements written self-closing inside the HTML.
SVG_EMPTY = {"line", "polyline", "polygon", "circle", "path", "rect"}


class _Checker(HTMLParser):
    """Collects tags and checks that every non-void element is closed in order."""

    def __init__(self) -> None:
        super().__init__(convert_charrefs=True)
        self.stack: list[str] = []
        self.tags: list[str] = []
        self.errors: list[str] = []
        self.attrs: list[tuple[str, str | None]] = []
        self.text: list[str] = []

    def handle_starttag(self, tag, attrs):
        self.tags.append(tag)
        self.attrs += attrs
        if tag not in VOID:
            self.stack.append(tag)

    def handle_startendtag(self, tag, attrs):
        self.tags.append(tag)
        self.attrs += attrs

    def handle_endtag(self, tag):
        if not self.stack or self.stack[-1] != tag:
            self.errors.append(f"unexpected </{tag}> with open {self.stack[-3:]}")
            return
        self.stack.pop()

    def handle_data(self, data):
        self.text.append(data)


def _parse_html(text: str) -> _Checker:
    checker = _Checker()
    checker.feed(text)
    checker.close()
    assert not checker.errors, checker.errors[:3]
    assert checker.stack == [], checker.stack
    return checker


def _svgs(text: str) -> list[ET.Element]:
    return [ET.fromstring(m) for m in re.findall(r"<svg\b.*?</svg>", text, flags=re.S)]


def _by_class(svg: ET.Element, cls: str) -> list[ET.Element]:
    return [e for e in svg.iter() if cls in (e.get("class") or "").split()]


def _points(el: ET.Element) -> list[tuple[float, float]]:
    tag = el.tag.replace(SVG_NS, "")
    if tag == "line":
        return [
            (float(el.get("x1")), float(el.get("y1"))),
            (float(el.get("x2")), float(el.get("y2"))),
        ]
    if tag in ("polyline", "polygon"):
        pairs = el.get("points").split()
        return [tuple(float(v) for v in p.split(",")) for p in pairs]
    if tag == "circle":
        cx, cy, r = float(el.get("cx")), float(el.get("cy")), float(el.get("r"))
        return [(cx - r, cy - r), (cx + r, cy + r)]
    if tag == "text":
        return [(float(el.get("x")), float(el.get("y")))]
    return []


def _reports(tmp_path: Path, doc: Path) -> tuple[str, str]:
    out_html = tmp_path / f"{doc.stem}.html"
    out_md = tmp_path / f"{doc.stem}.md"
    for out in (out_html, out_md):
        assert main(["report", str(doc), "--out", str(out), "--target-date", TARGET]) == 0
    return out_html.read_text(encoding="utf-8"), out_md.read_text(encoding="utf-8")


def _conv(doc: Path):
    return convert_document(load_document(doc), file=str(doc), target_date=TARGET)


def _norm(text: str) -> str:
    return " ".join(html.unescape(text).split())


@pytest.mark.parametrize("doc", DEMOS, ids=lambda p: p.stem)
def test_every_demo_gives_html_and_markdown(tmp_path, doc):
    page, md = _reports(tmp_path, doc)
    checker = _parse_html(page)
    assert checker.tags[0] == "html"
    # Self-contained: nothing fetched (no scripts, links, images, sources, imports, urls).
    assert not {"script", "link", "img", "iframe", "object"} & set(checker.tags)
    assert not [a for a, v in checker.attrs if a in ("src", "href")]
    assert "@import" not in page and "url(" not in page
    # Both formats carry the course table (every call) and the cautions.
    conv = _conv(doc)
    text = _norm(" ".join(checker.text))
    for c in conv.courses:
        assert _norm(c.call) in text
        assert c.bearing.true in page and c.bearing.true in md
        assert c.bearing.magnetic_target in page and c.bearing.magnetic_target in md
    assert _norm(CAUTIONS) in text
    assert _norm(CAUTIONS) in _norm(md.replace("\\", ""))
    assert "<svg" not in md
    # north diagram, traverse sketch and declination history
    assert len(_svgs(page)) == (3 if conv.courses else 1)


@pytest.mark.parametrize("doc", DEMOS, ids=lambda p: p.stem)
def test_svgs_parse_and_stay_inside_their_viewbox(tmp_path, doc):
    page, _ = _reports(tmp_path, doc)
    svgs = _svgs(page)
    assert svgs
    for svg in svgs:
        x0, y0, w, h = (float(v) for v in svg.get("viewBox").split())
        width_mm = float(svg.get("width").removesuffix("mm"))
        height_mm = float(svg.get("height").removesuffix("mm"))
        # Printable width 170 mm (A4 210 mm - 2 x 20 mm); Letter is wider (215.9 mm).
        assert width_mm <= BODY_WIDTH_MM <= 170.0
        # Letter's printable height with 18 mm margins is 243.4 mm: a figure fits one page.
        assert height_mm <= 243.0
        assert math.isclose(height_mm / width_mm, h / w, rel_tol=2e-3)
        n = 0
        for el in svg.iter():
            for x, y in _points(el):
                n += 1
                assert x0 <= x <= x0 + w and y0 <= y <= y0 + h, (el.tag, x, y)
            if el.tag == f"{SVG_NS}text":  # the estimated extent of labels fits as well
                size = float(el.get("font-size"))
                half = 0.6 * size * len(el.text or "")
                left = {"start": 0.0, "middle": half / 2, "end": half}[el.get("text-anchor")]
                x = float(el.get("x"))
                assert x0 <= x - left and x - left + half <= x0 + w
        assert n > 5


@pytest.mark.parametrize("doc", [d for d in DEMOS], ids=lambda p: p.stem)
def test_sketch_misclosure_is_drawn_to_the_stated_scale(tmp_path, doc):
    page, _ = _reports(tmp_path, doc)
    conv = _conv(doc)
    clo = close_document(conv)
    sketch = next(s for s in _svgs(page) if "traverse-sketch" in s.get("class"))
    per_m = float(sketch.get("data-units-per-m"))
    # The stated map scale 1:N is the one the SVG prints at: N = ground mm / paper mm.
    _, _, w, _ = (float(v) for v in sketch.get("viewBox").split())
    mm_per_unit = float(sketch.get("width").removesuffix("mm")) / w
    ratio = float(sketch.get("data-scale").split(":")[1])
    assert math.isclose(1000.0 / (per_m * mm_per_unit), ratio, rel_tol=1e-6)
    assert f"1:{ratio:,.0f}" in page
    bar = _by_class(sketch, "scale-bar")[0]
    (bx1, _), (bx2, _) = _points(bar)
    # (coordinates are written to 0.001 user units)
    assert math.isclose((bx2 - bx1) / per_m, float(bar.get("data-length-m")), rel_tol=1e-4)
    # The course line passes through every station at the drawn scale.
    line = _points(_by_class(sketch, "course-line")[0])
    for (xa, ya), (xb, yb), sa, sb in zip(
        line, line[1:], clo.unadjusted_stations, clo.unadjusted_stations[1:], strict=False
    ):
        length = math.hypot(sb.north_m - sa.north_m, sb.east_m - sa.east_m)
        assert math.isclose(math.hypot(xb - xa, yb - ya) / per_m, length, abs_tol=0.02)
    gap = _by_class(sketch, "misclosure")
    if not clo.closed:
        assert gap == []
        return
    (x1, y1), (x2, y2) = _points(gap[0])
    # Coordinates are written to 0.001 user units: at most a few centimetres of ground.
    assert math.isclose(math.hypot(x2 - x1, y2 - y1) / per_m, clo.misclosure_m, abs_tol=0.02)
    assert f"{clo.misclosure_m:,.3f} m" in page


@pytest.mark.parametrize("doc", DEMOS, ids=lambda p: p.stem)
def test_north_diagram_angles_match_the_conversion(tmp_path, doc):
    page, _ = _reports(tmp_path, doc)
    conv = _conv(doc)
    first = conv.courses[0]
    diagram = next(s for s in _svgs(page) if "north-diagram" in s.get("class"))
    rays = {r.get("data-north"): r for r in _by_class(diagram, "ray")}
    expected = {"true": 0.0, "grid": first.convergence_deg}
    expected["magnetic_target"] = first.declination_target_deg
    if first.declination_record_deg is not None:
        expected["magnetic_record"] = first.declination_record_deg
    assert set(rays) == set(expected)
    labels = {t.get("data-north"): t.text for t in _by_class(diagram, "ray-label")}
    for key, angle in expected.items():
        ray = rays[key]
        assert float(ray.get("data-angle-deg")) == pytest.approx(angle, abs=1e-9)
        (x1, y1), (x2, y2) = _points(ray)
        drawn = math.degrees(math.atan2(x2 - x1, y1 - y2))  # clockwise from up
        assert drawn == pytest.approx(diagram_angle(angle), abs=0.01)
        if key != "true":
            precision = 1 / 3600 if key == "grid" else 1 / 60
            assert format_declination(angle, precision=precision) in labels[key]
    assert "drawn out of scale" in page and "labels give the true values" in page


def test_grid_convergence_in_the_diagram_agrees_with_pyproj():
    # Independent check: pyproj's meridian convergence (PROJ factors) at the point of
    # beginning, the same sign convention as DESIGN.md's gamma (clockwise, true to grid).
    from pyproj import Proj

    for doc in DEMOS:
        conv = _conv(doc)
        p0 = conv.stations[0]
        ref = Proj(conv.crs).get_factors(p0.lon, p0.lat).meridian_convergence
        page = render_html(collect_report(conv))
        diagram = next(s for s in _svgs(page) if "north-diagram" in s.get("class"))
        grid = next(r for r in _by_class(diagram, "ray") if r.get("data-north") == "grid")
        assert float(grid.get("data-angle-deg")) == pytest.approx(ref, abs=1e-6)


def test_diagram_declinations_agree_with_ppigrf():
    # Independent check of the drawn D at both dates for an IGRF document: ppigrf (IGRF-14,
    # geodetic input) at the point of beginning; 0.01 degree covers the two implementations.
    ppigrf = pytest.importorskip("ppigrf")
    import datetime as dt

    doc = next(d for d in DEMOS if "greyfen" in d.name)
    conv = _conv(doc)
    p0 = conv.stations[0]
    page = render_html(collect_report(conv))
    diagram = next(s for s in _svgs(page) if "north-diagram" in s.get("class"))
    rays = {r.get("data-north"): float(r.get("data-angle-deg")) for r in _by_class(diagram, "ray")}
    for key, day in (
        ("magnetic_record", dt.datetime(1925, 10, 3)),
        ("magnetic_target", dt.datetime(2026, 6, 1)),
    ):
        be, bn, _bu = ppigrf.igrf(p0.lon, p0.lat, conv.height_m / 1000.0, day)
        ref = math.degrees(math.atan2(float(np.ravel(be)[0]), float(np.ravel(bn)[0])))
        assert rays[key] == pytest.approx(ref, abs=0.01)


def test_diagram_angle_enlarges_small_angles_and_keeps_order():
    values = np.linspace(-40.0, 40.0, 801)
    drawn = np.array([diagram_angle(v) for v in values])
    assert np.all(np.diff(drawn) > 0)  # monotone: the order of the norths is kept
    assert diagram_angle(0.0) == 0.0
    assert diagram_angle(20.0) == 20.0 and diagram_angle(-30.0) == -30.0
    for small in (0.05, 0.5, 2.0, 10.0):
        assert abs(diagram_angle(small)) > small and diagram_angle(-small) == -diagram_angle(small)


def test_field_vector_and_dates_are_reported(tmp_path):
    doc = next(d for d in DEMOS if "kettle" in d.name)
    page, md = _reports(tmp_path, doc)
    for text in (page, md):
        for label in (
            "inclination I",
            "horizontal intensity H",
            "vertical component Z",
            "total intensity F",
            "yearly change of D",
            "WMMHR2025".lower(),
        ):
            assert label.lower() in text.lower()
        assert "(1σ)" in text  # WMMHR2025 publishes an uncertainty
        assert TARGET in text and "2025-09-16" in text


def _escaping_doc() -> str:
    return """
format_version = 1
title = "<script>alert('x')</script> & <b>lot</b> | *one*"
closed = true

[place]
lat = 44.1
lon = -72.9

[record]
reference = "true"
distance_unit = "m"

[[course]]
call = "N 0 E 100 m to a <img src=x onerror=alert(1)> stone"
note = "</td></tr></table><script>bad()</script>"

[[course]]
call = "S 90 E 100 m"

[[course]]
call = "S 0 E 100 m"

[[course]]
call = "N 90 W 100 m"
"""


def test_user_strings_are_escaped(tmp_path):
    src = tmp_path / "odd.toml"
    src.write_text(_escaping_doc(), encoding="utf-8")
    for name in ("odd.html", "odd.md"):
        assert (
            main(["report", str(src), "--out", str(tmp_path / name), "--target-date", TARGET]) == 0
        )
    page = (tmp_path / "odd.html").read_text(encoding="utf-8")
    checker = _parse_html(page)
    assert "script" not in checker.tags and "img" not in checker.tags and "b" not in checker.tags
    assert "<script>" not in page and "&lt;script&gt;" in page
    text = " ".join(checker.text)
    assert "<script>alert('x')</script> & <b>lot</b>" in text  # shown as written
    for svg in _svgs(page):  # titles inside the SVG are escaped for XML as well
        assert svg is not None
    md = (tmp_path / "odd.md").read_text(encoding="utf-8")
    assert "<script>" not in md and "<img" not in md and "&lt;script&gt;" in md
    assert "\\|" in md  # a pipe in a user string cannot break a table row
    # Every Markdown table row has as many cells as its header.
    table_rows = [line for line in md.splitlines() if line.startswith("| ")]
    assert table_rows
    for line in table_rows:
        assert len(re.findall(r"(?<!\\)\|", line)) >= 3


def test_force_and_errors(tmp_path, capsys):
    doc = DEMOS[0]
    out = tmp_path / "r.html"
    assert main(["report", str(doc), "--out", str(out), "--target-date", TARGET]) == 0
    first = out.read_text(encoding="utf-8")
    out.write_text("keep me", encoding="utf-8")
    capsys.readouterr()
    assert main(["report", str(doc), "--out", str(out), "--target-date", TARGET]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "--force" in err and str(out) in err
    assert out.read_text(encoding="utf-8") == "keep me"  # never overwritten without --force
    assert main(["report", str(doc), "--out", str(out), "--force", "--target-date", TARGET]) == 0
    assert out.read_text(encoding="utf-8") == first
    assert [p.name for p in tmp_path.iterdir()] == ["r.html"]  # no temporary left behind
    # Format from the extension; anything else is refused before any work.
    assert main(["report", str(doc), "--out", str(tmp_path / "r.pdf")]) == 2
    assert ".pdf" in capsys.readouterr().err
    # A bad document: one line naming the file, course and key; nothing written.
    bad = tmp_path / "bad.toml"
    bad.write_text(_escaping_doc().replace("N 90 W 100 m", "Q 90 W 100 m"), encoding="utf-8")
    assert main(["report", str(bad), "--out", str(tmp_path / "bad.md")]) == 2
    err = capsys.readouterr().err
    assert err.count("\n") == 1 and "bad.toml" in err and "course 4" in err
    assert not (tmp_path / "bad.md").exists()


def test_local_attraction_and_fit_sections(tmp_path):
    # Back bearings (local attraction) are in the farm deed; a fit needs two found stations:
    # the cruise line with its found end and a found end of course 1 added.
    farm = next(d for d in DEMOS if "brindlecombe" in d.name)
    page, md = _reports(tmp_path, farm)
    for text in (page, md):
        assert "Local attraction" in text
    cruise = next(d for d in DEMOS if "kettle" in d.name).read_text(encoding="utf-8")
    cruise = cruise.replace(
        'every = "5 chains"\nnote = "Start',
        'every = "5 chains"\nfound = { lat = 47.485470, lon = -91.219500 }\nnote = "Start',
    )
    src = tmp_path / "cruise.toml"
    src.write_text(cruise, encoding="utf-8")
    doc = load_document(src)
    conv = convert_document(doc, file=str(src), target_date=TARGET)
    fit = fit_document(conv)
    report = collect_report(conv)
    for text in (render_html(report), render_markdown(report)):
        assert "Record-to-found fit" in text
        assert format_declination(fit.empirical_declination_deg) in text
        assert f"{fit.rms_m:.3f} m" in text


def test_build_report_formats():
    doc = load_document(DEMOS[0])
    md = build_report(doc, fmt="markdown", file=str(DEMOS[0]), target_date=TARGET)
    assert md.startswith("# ") and "| --- |" not in md.splitlines()[0]
    a4 = build_report(doc, fmt="html", file=str(DEMOS[0]), target_date=TARGET, paper="a4")
    assert "size: A4;" in a4
    assert "size: letter;" in build_report(doc, fmt="html", target_date=TARGET, paper="letter")


# --------------------------------------------------------------------------------------------
# Print layout with a headless Chromium (optional)
# --------------------------------------------------------------------------------------------

CHROMIUM = next(
    (
        p
        for p in (
            "/usr/bin/chromium",
            shutil.which("chromium") or "",
            shutil.which("chromium-browser") or "",
        )
        if p and Path(p).exists()
    ),
    None,
)
# Page sizes in PostScript points (ISO 216 A4 = 210 x 297 mm; ANSI Letter = 8.5 x 11 in).
PAGE_PT = {"a4": (595.28, 841.89), "letter": (612.0, 792.0)}


def _pdf_pages(data: bytes) -> list[tuple[float, float]]:
    boxes = re.findall(rb"/MediaBox\s*\[\s*([\d.]+)\s+([\d.]+)\s+([\d.]+)\s+([\d.]+)\s*\]", data)
    pages = len(re.findall(rb"/Type\s*/Page(?!s)", data))
    sizes = [(float(c) - float(a), float(d) - float(b)) for a, b, c, d in boxes]
    assert pages >= 1 and len(sizes) >= 1
    return sizes[:pages] if len(sizes) >= pages else sizes * pages


@pytest.mark.skipif(
    CHROMIUM is None,
    reason="headless Chromium not installed (/usr/bin/chromium); the SVG-width checks stand",
)
@pytest.mark.parametrize("paper", ["a4", "letter"])
def test_prints_on_a4_and_letter(tmp_path, paper):
    doc = next(d for d in DEMOS if "brindlecombe" in d.name)
    out = tmp_path / "r.html"
    assert (
        main(["report", str(doc), "--out", str(out), "--paper", paper, "--target-date", TARGET])
        == 0
    )
    pdf = tmp_path / "r.pdf"
    cmd = [
        CHROMIUM,
        "--headless",
        "--no-sandbox",
        "--disable-gpu",
        "--disable-quic",
        "--no-first-run",
        "--disable-background-networking",
        "--disable-component-update",
        "--disable-sync",
        f"--user-data-dir={tmp_path / 'profile'}",
        "--no-pdf-header-footer",
        f"--print-to-pdf={pdf}",
        out.as_uri(),
    ]
    try:
        subprocess.run(cmd, capture_output=True, timeout=120, check=False)
    except subprocess.TimeoutExpired:
        pytest.skip("headless Chromium did not finish printing within 120 s")
    if not pdf.exists():
        pytest.skip("headless Chromium produced no PDF on this machine")
    sizes = _pdf_pages(pdf.read_bytes())
    want = PAGE_PT[paper]
    for w, h in sizes:
        assert w == pytest.approx(want[0], abs=1.5) and h == pytest.approx(want[1], abs=1.5)
    # The whole report of a six-course deed takes a few pages, not one per table row.
    assert 2 <= len(sizes) <= 8
