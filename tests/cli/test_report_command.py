"""``python -m layout report``: the file written, progress on a terminal, one-line errors."""

from __future__ import annotations

import io
import sys
from io import BytesIO

import pypdf

from layout.cli import main


class Terminal(io.StringIO):
    def isatty(self):
        return True


def test_report_writes_the_pdf_and_prints_its_path(tmp_path, monkeypatch, capsys):
    terminal = Terminal()
    monkeypatch.setattr(sys, "stderr", terminal)
    target = tmp_path / "demo.pdf"
    assert main(["report", "--demo", "-o", str(target), "--paper", "a4",
                 "--preparer", "J. Roofer"]) == 0
    assert capsys.readouterr().out.strip() == str(target)
    reader = pypdf.PdfReader(BytesIO(target.read_bytes()))
    assert round(float(reader.pages[0].mediabox.width)) == 595  # A4 is 210 mm = 595 pt
    assert "J. Roofer" in " ".join(page.extract_text() for page in reader.pages)
    progress = terminal.getvalue()
    assert "tracing the sun" in progress and "laying out the PDF" in progress
    assert progress.endswith("\r\033[K")
    assert [p.name for p in tmp_path.iterdir()] == ["demo.pdf"]


def test_report_html_with_the_comparison(tmp_path, capsys):
    target = tmp_path / "demo.html"
    assert main(["report", "--demo", "-o", str(target), "--with-compare"]) == 0
    text = target.read_text(encoding="utf-8")
    assert "Portrait against landscape" in text and "landscape without the worst" in text


def test_bad_report_requests_are_one_line_and_leave_nothing(tmp_path, capsys):
    for argv, words in (
        (["-o", str(tmp_path / "demo.docx")], "-o: has an unknown extension"),
        (["-o", str(tmp_path / "no" / "demo.pdf")], "-o: is in a folder that does not exist"),
        (["-o", str(tmp_path / "demo.pdf"), "--with-range", "1"], "--with-range: must be"),
    ):
        assert main(["report", "--demo", *argv]) == 1
        captured = capsys.readouterr()
        lines = captured.err.strip().splitlines()
        assert len(lines) == 1 and lines[0].startswith("error: ") and words in lines[0]
        assert "Traceback" not in captured.err
    broken = tmp_path / "broken.eaveline.json"
    broken.write_text('{"eaveline_schema_version": 1}', encoding="utf-8")
    assert main(["report", str(broken), "-o", str(tmp_path / "x.pdf")]) == 1
    assert capsys.readouterr().err.startswith("error: ")
    assert sorted(p.name for p in tmp_path.iterdir()) == ["broken.eaveline.json"]
