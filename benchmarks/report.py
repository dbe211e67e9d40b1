"""Time the shade report beyond the evaluation, and print ratios measured in this run.

Two cases, each evaluated once (:class:`layout.study.analysis.Analysis`, hourly clear sky),
then reported as PDF and as HTML from that evaluation:

* the bundled demo project (13 modules): issue target, the report in at most 5 s beyond the
  evaluation;
* the 500-module roof of ``benchmarks/evaluation.py`` (a 10° shed roof, 50 × 10 portrait
  modules, a tree and a building): target at most 30 s beyond the evaluation.

"Beyond the evaluation" is assembling the sections (sky charts included: each array's worst
module is ray-tested over a grid of directions), drawing the figures and laying out the file.
Each report is made ``--repeat`` times and the median is printed, beside the evaluation's own
time in the same run; nothing here is asserted.

Run: ``.venv/bin/python benchmarks/report.py [--skip-big] [--repeat N]``.
"""

from __future__ import annotations

import argparse
import statistics
import time

from evaluation import big_project  # the 500-module roof, shared with that benchmark

from layout.project import load_demo_project
from layout.report import build_report, render_html, render_pdf
from layout.runtime import process_settings
from layout.study.analysis import Analysis

TARGETS_S = {"demo": 5.0, "500-module roof": 30.0}


def _median_time(make, repeat: int) -> float:
    times = []
    for _ in range(repeat):
        start = time.perf_counter()
        make()
        times.append(time.perf_counter() - start)
    return statistics.median(times)


def run_case(name: str, project, repeat: int) -> None:
    start = time.perf_counter()
    evaluation = Analysis(project).result
    evaluate_s = time.perf_counter() - start
    pdf_s = _median_time(lambda: render_pdf(build_report(evaluation)), repeat)
    html_s = _median_time(lambda: render_html(build_report(evaluation)), repeat)
    target = TARGETS_S[name]
    print(f"\n{name}: {len(evaluation.modules)} modules; evaluation {evaluate_s:.2f} s")
    for fmt, seconds in (("PDF", pdf_s), ("HTML", html_s)):
        verdict = "met" if seconds <= target else "MISSED"
        print(f"  {fmt:4s} report beyond the evaluation {seconds:6.2f} s = "
              f"{seconds / evaluate_s:5.2f} × the evaluation; target <= {target:g} s: {verdict} "
              f"({seconds / target:.2f} of it)")


def main() -> None:
    parser = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    parser.add_argument("--skip-big", action="store_true", help="only the demo project")
    parser.add_argument("--repeat", type=int, default=3, help="reports per case (median)")
    args = parser.parse_args()
    process_settings()
    run_case("demo", load_demo_project(), args.repeat)
    if not args.skip_big:
        run_case("500-module roof", big_project(), max(1, args.repeat - 2))


if __name__ == "__main__":
    main()
