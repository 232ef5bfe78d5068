"""The `wavebench seakeeping` command end to end, on a small batch, and the SVG helpers."""

from __future__ import annotations

import math
import xml.etree.ElementTree as ET
from pathlib import Path

import pytest

from wavebench.cli import main
from wavebench.report.svg import Series, line_chart, nice_ticks


def test_seakeeping_prints_report_and_writes_html(tmp_path: Path, capsys: pytest.CaptureFixture[str]) -> None:
    page = tmp_path / "demo.html"
    assert main(["seakeeping", "--trials", "6", "--quiet", "--html", str(page)]) == 0
    out = capsys.readouterr().out
    for heading in ("JONSWAP sea", "WMO code table 3700", "significant wave-frequency motion",
                    "6 trials x 600 s", "Manoeuvring report", "CAUTION"):  # fmt: skip
        assert heading in out, heading
    assert "sea trials" in out and "Collisions at Sea" in out
    text = page.read_text(encoding="utf-8")
    assert text.count("<svg") == 6
    assert "no substitute for sea trials" in text


def test_seakeeping_twin_hull_is_sized_from_the_craft(capsys: pytest.CaptureFixture[str]) -> None:
    # the ordered speed defaults to 80 % of the craft's own top speed, below it
    assert main(["seakeeping", "--craft", "Dulse", "--trials", "4", "--quiet"]) == 0
    out = capsys.readouterr().out
    assert "1.60 m/s surge" in out and "twin hull" in out


def test_seakeeping_rejects_a_speed_above_top_speed(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["seakeeping", "--speed", "9", "--trials", "2", "--quiet"]) == 2
    assert "speed_mps" in capsys.readouterr().err


def test_seakeeping_rejects_an_unknown_craft(capsys: pytest.CaptureFixture[str]) -> None:
    assert main(["seakeeping", "--craft", "Nonesuch", "--trials", "2", "--quiet"]) == 2
    err = capsys.readouterr().err
    assert "Nonesuch" in err and "Dulse" in err and "Tholepin" in err


def test_svg_is_well_formed_xml() -> None:
    # the stdlib XML parser (a reference implementation of XML 1.0) must accept the chart
    svg = line_chart(
        [Series([0, 1, 2], [0.0, float("nan"), 4.0], "a <label> & more"), Series([0, 2], [1, 3], dashed=True)],
        title="t & <t>", xlabel="x [m]", ylabel="y [m]", equal_axes=True,
    )  # fmt: skip
    root = ET.fromstring(svg)
    assert root.tag.endswith("svg")
    paths = [el for el in root.iter() if el.tag.endswith("path")]
    assert len(paths) == 2
    # the NaN breaks the first line into two moves
    assert paths[0].get("d").count("M") == 2


@pytest.mark.parametrize(("lo", "hi"), [(0.0, 1.0), (-3.7, 12.2), (1e-4, 3e-4), (-500.0, -20.0)])
def test_nice_ticks_cover_the_range_in_round_steps(lo: float, hi: float) -> None:
    ticks = nice_ticks(lo, hi)
    assert lo <= ticks[0] and ticks[-1] <= hi
    steps = {round(b - a, 12) for a, b in zip(ticks, ticks[1:], strict=False)}
    assert len(steps) == 1
    step = steps.pop()
    mantissa = step / 10 ** math.floor(math.log10(step))
    assert round(mantissa, 6) in (1.0, 2.0, 5.0)
