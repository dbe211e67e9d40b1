"""The bundled demo project's report, regenerated and compared page by page with its text.

The golden text (tests/data/report_demo_pages.txt) is what pypdf reads from each page of the
demo report, with the report's dates fixed and eaveline's version written as {version}. A
change to the report's words or numbers shows here page by page; when it is intended,
regenerate the file with ``EAVELINE_REGENERATE_GOLDEN=1 python -m pytest tests/report``.
Pixels are not compared: text is what a reader checks.
"""

import datetime as dt
import os
from io import BytesIO
from pathlib import Path

import pypdf
import pytest

from layout.project import demo_project_path, load_demo_project
from layout.report import ReportOptions, build_report, render_pdf
from layout.report.cover import eaveline_version
from layout.study.analysis import Analysis

GOLDEN = Path(__file__).parents[1] / "data" / "report_demo_pages.txt"
PAGE_MARK = "==== page {} ===="


def demo_pages() -> list[str]:
    options = ReportOptions(report_date=dt.date(2026, 1, 15),
                            saved=dt.datetime(2026, 1, 14, 9, 30, tzinfo=dt.UTC))
    document = build_report(Analysis(load_demo_project()).result, options=options,
                            source=demo_project_path())
    reader = pypdf.PdfReader(BytesIO(render_pdf(document)))
    version = eaveline_version()
    return ["\n".join(line.rstrip() for line in page.extract_text().splitlines())
            .replace(version, "{version}") for page in reader.pages]


def read_golden() -> list[str]:
    text = GOLDEN.read_text(encoding="utf-8")
    pages, current = [], None
    for line in text.splitlines():
        if line.startswith("==== page ") and line.endswith(" ===="):
            if current is not None:
                pages.append("\n".join(current))
            current = []
        elif current is not None:
            current.append(line)
    if current is not None:
        pages.append("\n".join(current))
    return pages


def test_the_demo_report_reads_as_its_golden_text():
    pages = demo_pages()
    if os.environ.get("EAVELINE_REGENERATE_GOLDEN"):
        GOLDEN.write_text("".join(f"{PAGE_MARK.format(k + 1)}\n{page}\n"
                                  for k, page in enumerate(pages)), encoding="utf-8")
    if not GOLDEN.exists():
        pytest.fail(f"{GOLDEN} is missing; regenerate it (see this module's docstring)")
    golden = read_golden()
    assert len(pages) == len(golden), "the report has a different number of pages"
    for k, (page, expected) in enumerate(zip(pages, golden, strict=True)):
        assert page == expected, f"page {k + 1} differs from the golden text"
