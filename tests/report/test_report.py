"""The shade report: every number read back from the PDF (pypdf) and the HTML (html.parser)
equals the evaluation's own; the plan's scale bar measures true; the PDF renders (pdftoppm).

The demo project (imperial, one array of 13 modules, a chimney, a vent, a tree and a garage)
is reported once per module; a small invented project with one surveyed tree carries the
survey's readings and the shade-loss band.
"""

import datetime as dt
import math
import re
import shutil
import subprocess
from html.parser import HTMLParser
from io import BytesIO

import numpy as np
import pandas as pd
import pypdf
import pytest
from PIL import Image

from layout import FillOptions, Project, Site, gable_roof, generic_60_cell, no_setbacks
from layout.errors import InputError
from layout.power.energy import EnergyOptions
from layout.power.metrics import face_table, monthly_solar_access
from layout.project import demo_project_path, load_demo_project
from layout.report import PAPERS, ReportOptions, build_report, render_html, render_pdf, write_report
from layout.report.drawing import scale_bar_length
from layout.scene.survey import Reading, SurveyEntry
from layout.study.analysis import Analysis
from layout.study.outlook import shade_loss_range
from layout.units import FOOT_M

FIXED = ReportOptions(report_date=dt.date(2026, 1, 15),
                      saved=dt.datetime(2026, 1, 14, 9, 30, tzinfo=dt.UTC))
MONTHS = ("Jan", "Feb", "Mar", "Apr", "May", "Jun", "Jul", "Aug", "Sep", "Oct", "Nov", "Dec")


class _Tables(HTMLParser):
    """Collect each <table data-key=...> as a list of rows of cell texts (headings first)."""

    def __init__(self):
        super().__init__()
        self.tables: dict[str, list[list[str]]] = {}
        self._key = self._row = self._cell = None

    def handle_starttag(self, tag, attrs):
        if tag == "table":
            self._key = dict(attrs).get("data-key", "")
            self.tables[self._key] = []
        elif tag == "tr" and self._key is not None:
            self._row = []
        elif tag in ("td", "th") and self._row is not None:
            self._cell = []

    def handle_endtag(self, tag):
        if tag in ("td", "th") and self._cell is not None:
            self._row.append("".join(self._cell).strip())
            self._cell = None
        elif tag == "tr" and self._row is not None:
            self.tables[self._key].append(self._row)
            self._row = None
        elif tag == "table":
            self._key = None

    def handle_data(self, data):
        if self._cell is not None:
            self._cell.append(data)


def html_tables(text: str) -> dict:
    parser = _Tables()
    parser.feed(text)
    return parser.tables


def pdf_text(data: bytes) -> list[str]:
    return [page.extract_text() for page in pypdf.PdfReader(BytesIO(data)).pages]


def one(value, decimals=1, thousands=False):
    """The figure as the report should print it, formatted here independently."""
    if value is None or not math.isfinite(value):
        return "–"
    value = value if round(value, decimals) != 0 else 0.0  # a report prints no "-0.0"
    return f"{value:,.{decimals}f}" if thousands else f"{value:.{decimals}f}"


@pytest.fixture(scope="module")
def demo():
    project = load_demo_project()
    return Analysis(project).result


@pytest.fixture(scope="module")
def document(demo):
    return build_report(demo, options=FIXED, source=demo_project_path())


@pytest.fixture(scope="module")
def html(document):
    return render_html(document)


@pytest.fixture(scope="module")
def pdf(document):
    return render_pdf(document)


# --------------------------------------------------------------------------- numbers
def test_every_module_row_of_the_html_equals_the_evaluation(demo, html):
    rows = html_tables(html)["modules"]
    table = demo.table
    threshold = demo.project.energy.tsrf_threshold_pct
    assert len(rows) == len(table) + 1
    for k, (module_id, r) in enumerate(table.iterrows()):
        flag = " *" if r.tsrf_pct < threshold else ""
        assert rows[k + 1] == [str(k + 1), module_id, r.face, str(r.row), str(r.column),
                               one(r.energy_kwh), one(r.shade_loss_pct),
                               one(r.solar_access_pct), one(r.tof_pct),
                               one(r.tsrf_pct) + flag]


def test_array_and_system_rows_equal_the_evaluation(demo, html):
    rows = {r[0]: r for r in html_tables(html)["arrays"][1:]}
    faces = face_table(demo.table, power_w=demo.project.module.power_w)
    for name, r in faces.iterrows():
        part = demo.table[demo.table["face"] == name]
        assert rows[name] == [name, str(int(r.modules)), one(r.power_kwp, 2),
                              one(r.energy_kwh, 0, True), one(r.shade_loss_pct),
                              one(r.solar_access_pct), one(part["tof_pct"].mean()),
                              one(part["tsrf_pct"].min()), one(r.tsrf_pct)]
    totals = demo.totals
    assert rows["system"][1:6] == [str(totals["modules"]), one(totals["power_kwp"], 2),
                                   one(totals["energy_kwh"], 0, True),
                                   one(totals["shade_loss_pct"]),
                                   one(totals["solar_access_pct"])]


def test_monthly_solar_access_is_the_ratio_of_monthly_insolation(demo, html):
    # Solar access as the trade defines it: insolation with shade over the same without, on
    # the module's plane (common practice); summed here with pandas' own month grouping.
    irradiance = demo.irradiance
    months = pd.Index(irradiance.times.month)
    shaded = pd.Series(irradiance.poa_global.sum(axis=1)).groupby(months).sum()
    unshaded = pd.Series(irradiance.poa_global_unshaded.sum(axis=1)).groupby(months).sum()
    rows = html_tables(html)["monthly_access"]
    for k, month in enumerate(MONTHS, start=1):
        assert rows[k][0] == month
        assert rows[k][-1] == one(100.0 * shaded[k] / unshaded[k])
    # the months add up to the year's figure of each module
    for column, (_, r) in enumerate(demo.table.iterrows()):
        series = monthly_solar_access(irradiance, columns=[column])
        weights = irradiance.poa_global_unshaded[:, column]
        weights = pd.Series(weights).groupby(months).sum().to_numpy()
        annual = float(np.sum(series.to_numpy() * weights) / weights.sum())
        assert annual == pytest.approx(r.solar_access_pct, rel=1e-9)


def test_the_sky_tables_equal_each_worst_modules_months(demo, html):
    tables = html_tables(html)
    worst = demo.table.groupby("face")["solar_access_pct"].idxmin()
    for module_id in worst:
        rows = tables[f"sky_monthly:{module_id}"]
        monthly = demo.module_monthly(module_id)
        for k in range(1, 13):
            assert rows[k][1:3] == [one(monthly.loc[k, "energy_kwh"]),
                                    one(monthly.loc[k, "shade_loss_pct"])]
        assert rows[13][1] == one(demo.table.loc[module_id, "energy_kwh"])


def test_the_pdf_prints_every_module_row_of_the_evaluation(demo, pdf):
    text = " ".join(" ".join(pdf_text(pdf)).split())
    for k, (module_id, r) in enumerate(demo.table.iterrows()):
        row = " ".join([str(k + 1), module_id, r.face, str(r.row), str(r.column),
                        one(r.energy_kwh), one(r.shade_loss_pct), one(r.solar_access_pct),
                        one(r.tof_pct), one(r.tsrf_pct)])
        assert row in text, row
    totals = demo.totals
    assert (f"system {totals['modules']} {one(totals['power_kwp'], 2)} "
            f"{one(totals['energy_kwh'], 0, True)} {one(totals['shade_loss_pct'])}") in text


def test_tsrf_read_back_is_tof_times_solar_access(pdf):
    # TSRF = solar access × TOF per module: the trade's definition (incentive-programme
    # handbooks; common practice). Each figure is printed to 0.1 %, so the product may miss
    # by the rounding of both factors: |δ| <= 0.05·TOF/100 + 0.05·access/100 + 0.05.
    text = " ".join(pdf_text(pdf))
    rows = re.findall(r"\b\d+ south/r\d+c\d+ south \d+ \d+ [\d.]+ [\d.]+ ([\d.]+) ([\d.]+) "
                      r"([\d.]+)", text)
    assert len(rows) == 13
    for access, tof, tsrf in ((float(a), float(t), float(s)) for a, t, s in rows):
        assert abs(tsrf - access * tof / 100.0) <= 0.05 * (access + tof) / 100.0 + 0.05


# --------------------------------------------------------------------------- the plan
def _path_points(svg: str, gid: str) -> np.ndarray:
    match = re.search(rf'<g id="{re.escape(gid)}">\s*<path d="([^"]+)"', svg)
    assert match, gid
    numbers = [float(v) for v in re.findall(r"-?\d+(?:\.\d+)?(?:e-?\d+)?", match.group(1))]
    return np.array(numbers).reshape(-1, 2)


def test_the_scale_bar_measures_the_plan_true(demo, html):
    # Geometry: the length of the scale bar in the drawing over its label equals the drawn
    # distance between two corners of a roof face over their distance in the project.
    svg = html[html.index("<svg"):html.index("</svg>")]
    bar = _path_points(svg, "scale-bar")
    bar_units = np.linalg.norm(bar[-1] - bar[0])
    label = re.search(r'<g id="scale-bar-label">.*?>([\d.]+) (ft|m)<', svg, re.S)
    assert label and label.group(2) == "ft"  # the demo is an imperial project
    bar_m = float(label.group(1)) * FOOT_M
    face = demo.project.faces[0]
    drawn = _path_points(svg, f"face:{face.name}")
    outline = np.asarray(face.outline)
    for i, j in ((0, 1), (1, 2), (0, 2)):
        drawn_ratio = np.linalg.norm(drawn[j] - drawn[i]) / bar_units
        true_ratio = np.linalg.norm(outline[j] - outline[i]) / bar_m
        assert drawn_ratio == pytest.approx(true_ratio, rel=2e-3)


def test_scale_bar_lengths_are_round():
    assert [scale_bar_length(s) for s in (3.0, 9.0, 41.0, 130.0)] == [0.5, 2.0, 10.0, 20.0]


# --------------------------------------------------------------------------- the PDF
def test_the_pdf_renders_a_page_that_is_not_blank(pdf, tmp_path):
    if shutil.which("pdftoppm") is None:
        pytest.fail("pdftoppm (Debian poppler-utils) is missing: run bash .ci/setup.sh --test")
    source = tmp_path / "report.pdf"
    source.write_bytes(pdf)
    subprocess.run(["pdftoppm", "-r", "40", "-png", "-f", "1", "-l", "2", str(source),
                    str(tmp_path / "page")], check=True, capture_output=True)
    for name in ("page-1.png", "page-2.png"):
        grey = np.asarray(Image.open(tmp_path / name).convert("L"), dtype=float)
        inked = (grey < 200).mean()
        assert 0.002 < inked < 0.6, (name, inked)


def test_the_paper_follows_the_units_or_the_choice(demo, document, pdf):
    def size_mm(data):
        box = pypdf.PdfReader(BytesIO(data)).pages[0].mediabox
        return float(box.width) * 25.4 / 72, float(box.height) * 25.4 / 72

    assert document.paper == "letter"  # the demo project is imperial
    assert size_mm(pdf) == pytest.approx(PAPERS["letter"], abs=0.2)
    a4 = build_report(demo, options=ReportOptions(paper="a4"))
    assert size_mm(render_pdf(a4)) == pytest.approx(PAPERS["a4"], abs=0.2)


def test_the_cover_names_site_dates_version_and_weather(demo, pdf):
    first = pdf_text(pdf)[0]
    site = demo.project.site
    for text in (demo.project.name, site.name, f"{site.latitude:.5f}°", "America/Denver",
                 "2026-01-15", "2026-01-14 09:30", "demo_house.eaveline.json",
                 demo.weather.source, "overstates"):
        assert text in " ".join(first.split()), text


def test_the_cautions_and_preparer_fields_are_printed(demo):
    text = " ".join(" ".join(pdf_text(render_pdf(build_report(
        demo, options=ReportOptions(preparer="A. Surveyor", licence="PV-1234"))))).split())
    for caution in ("authority having jurisdiction", "structural review", "NFPA 70",
                    "A. Surveyor", "PV-1234", "Perez", "SAPM"):
        assert caution in text, caution


def test_the_html_is_self_contained(html):
    assert "<svg" in html and "<script" not in html
    assert not re.search(r"(src|href)=\"https?:", html)


# --------------------------------------------------------------------------- edge cases
SITE = Site(40.0, -105.0, "America/Denver", altitude_m=1600.0, name="report test site")


def small_project(survey=()):
    house = gable_roof(6.0, 6.0, 25.0, 3.0, name="")
    return Project(site=SITE, buildings=(house,), module=generic_60_cell(400.0),
                   clearance=no_setbacks(), fill=FillOptions(), array_faces=("south",),
                   survey=tuple(survey), energy=EnergyOptions(sky_directions=256),
                   name="report test house")


def oak(**changes):
    readings = dict(kind="tree", bearing_deg=Reading(180.0, 0.0), distance_m=9.0,
                    top_angle_deg=40.0, station_x_m=3.0, station_y_m=-1.0,
                    crown_radius_m=2.5, crown_base_m=2.0, name="oak")
    readings.update(changes)
    return SurveyEntry(**readings)


def test_a_layout_without_modules_still_reports_and_says_so():
    project = small_project()
    analysis = Analysis(project)
    every = [m.id for m in analysis.result.modules]
    analysis.update(project.with_changes(removed=analysis.result.layout.remove(every).removed))
    evaluation = analysis.result
    assert len(evaluation.table) == 0
    text = " ".join(" ".join(pdf_text(render_pdf(build_report(evaluation)))).split())
    assert "This layout has no modules" in text
    assert "There are no modules" in text


def test_surveyed_readings_tolerances_and_the_band_are_reported():
    project = small_project(survey=(oak(),))
    analysis = Analysis(project)
    band = shade_loss_range(project, samples=4, seed=3, analysis=analysis)
    document = build_report(analysis.result, loss_range=band,
                            options=ReportOptions(with_range=4))
    tables = html_tables(render_html(document))
    readings = {r[0]: r[1:] for r in tables["readings:oak"][1:]}
    assert readings["distance"] == ["9.0 m", "± 0.1 m"]  # the tape's default tolerance
    assert readings["bearing"] == ["180.0 °", "none given"]
    rows = {r[0]: r[1:] for r in tables["loss_range"][1:]}
    totals = band.totals
    assert rows["shade loss %"] == [one(totals.loc["shade_loss_pct", c])
                                    for c in ("nominal", "p5", "p95")]
    text = " ".join(" ".join(pdf_text(render_pdf(document))).split())
    assert "no tolerance was given for bearing" in text
    assert "tangent method" in text


def test_bad_output_paths_are_refused_before_any_work(tmp_path):
    project = small_project()
    with pytest.raises(InputError, match="unknown extension") as err:
        write_report(project, tmp_path / "report.docx")
    assert err.value.field == "output"
    with pytest.raises(InputError, match="does not exist"):
        write_report(project, tmp_path / "missing" / "report.pdf")
    (tmp_path / "folder.pdf").mkdir()
    with pytest.raises(InputError, match="is a folder"):
        write_report(project, tmp_path / "folder.pdf")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["folder.pdf"]


def test_a_failure_while_writing_leaves_no_partial_file(tmp_path, monkeypatch):
    import layout.report.files as files

    target = tmp_path / "report.html"

    def broken(handle, mode):
        stream = open(handle, mode)
        write = stream.write

        def fail(data):
            write(data[:10])
            raise OSError(28, "No space left on device")

        stream.write = fail
        return stream

    monkeypatch.setattr(files.os, "fdopen", broken)
    with pytest.raises(OSError, match="No space"):
        write_report(small_project(), target)
    assert list(tmp_path.iterdir()) == []


def test_asking_for_the_band_draws_it_from_the_survey():
    from layout.report import prepare_report

    project = small_project(survey=(oak(bearing_deg=180.0),))
    labels = []
    document = prepare_report(project, options=ReportOptions(with_range=3),
                              progress=lambda label, done, total: labels.append(label))
    tables = {t.key: t for t in document.tables()}
    assert "loss_range" in tables and "3 draws" in tables["loss_range"].caption
    assert any("draw 3 of" in label for label in labels)
    plain = prepare_report(small_project(), options=ReportOptions(with_range=3))
    notes = [b.text for b in plain.section("obstructions").blocks if hasattr(b, "text")]
    assert any("no surveyed obstruction" in n for n in notes)


def test_the_comparison_rows_equal_the_comparisons_table():
    from layout.study.compare import compare_layouts

    project = small_project()
    analysis = Analysis(project)
    comparison = compare_layouts(project, orientations=("portrait", "landscape"),
                                 analysis=analysis)
    document = build_report(analysis.result, comparison=comparison)
    rows = {r[0]: r[1:] for r in html_tables(render_html(document))["comparison"][1:]}
    assert set(rows) == set(comparison.table.index)
    for name, r in comparison.table.iterrows():
        assert rows[name] == [str(int(r.modules)), str(int(r.dropped)), one(r.power_kwp, 2),
                              one(r.energy_kwh, 0, True),
                              one(r.specific_yield_kwh_per_kwp, 0, True),
                              one(r.shade_loss_pct), one(r.tsrf_mean_pct),
                              str(int(r.modules_below_tsrf))]


def test_the_survey_against_elevation_data_is_reported():
    from layout.elevation import PROVENANCE
    from layout.project_imports import survey_against_elevation
    from layout.scene.obstructions import Tree

    # the oak's readings put it at (3, -10), 9.15 m tall (its height range 8.88 to 9.43 m);
    # the data found a tree 5 cm farther along the sight line, inside the tape's 0.1 m
    for height, verdict in ((9.0, "agrees"), (14.0, "differs: check on site")):
        found = Tree((3.0, -10.05), height, 2.5, 2.0, name="tree 1")
        project = small_project(survey=(oak(),)).with_changes(
            obstructions=(found,), sources=({"kind": "elevation data", "note": PROVENANCE,
                                             "items": ["tree 1"]},))
        (check,) = survey_against_elevation(project)
        tables = html_tables(render_html(build_report(Analysis(project).result)))
        (row,) = tables["crosscheck"][1:]
        assert row[:2] == ["oak", "tree 1"]
        assert row[2] == one(check.surveyed_height_m) and row[3] == one(height)
        assert row[-1] == verdict


def test_the_plan_outlines_what_came_from_elevation_data():
    from layout.elevation import PROVENANCE
    from layout.report.colours import DATA_EDGE
    from layout.report.plan import layout_section, plan_drawing
    from layout.scene.obstructions import Tree

    found = Tree((3.0, -10.0), 9.0, 2.5, 2.0, name="tree 1")
    base = small_project()
    face = base.faces[0]
    project = base.with_changes(obstructions=(found,), sources=(
        {"kind": "elevation data", "note": PROVENANCE, "items": [face.name, "tree 1"]},))
    evaluation = Analysis(project).result
    drawing = plan_drawing(evaluation)
    assert [name for name, _ in drawing.from_data] == [face.name, "tree 1"]
    assert PROVENANCE in layout_section(evaluation).blocks[0].caption
    svg = render_html(build_report(evaluation))
    svg = svg[svg.index("<svg"):svg.index("</svg>")]
    # the dotted outline runs through the face's own corners (the same transform as the face)
    drawn, outline = _path_points(svg, f"data:{face.name}"), _path_points(svg, f"face:{face.name}")
    np.testing.assert_allclose(drawn[:len(outline) - 1], outline[:-1], atol=1e-3)
    assert DATA_EDGE.lower() in svg.lower()
    # an entered project has none, and its caption does not speak of them
    plain = Analysis(base).result
    assert plan_drawing(plain).from_data == ()
    assert PROVENANCE not in layout_section(plain).blocks[0].caption
