"""The command line honours docs/case-format.md to the letter."""

from __future__ import annotations

import json
from pathlib import Path

import pytest
from cli_runner import ROOT, run_cli

MINIMUM = {
    # The minimum input of docs/case-format.md.
    "right": {"sphere": -3.25, "cylinder": -0.75, "axis": 20,
              "prism": {"base_in": 0, "base_up": 0}},
    "left": {"sphere": -1.00, "cylinder": 0, "axis": 0},
    "points": [{"name": "reading", "right": {"in_mm": 2, "up_mm": -10},
                "left": {"in_mm": 2, "up_mm": -10}}],
}


def test_minimum_input_gives_the_fixed_output_keys(tmp_path: Path) -> None:
    path = tmp_path / "case.json"
    path.write_text(json.dumps(MINIMUM))
    run = run_cli("evaluate", str(path))
    assert run.code == 0 and run.stderr == ""
    out = run.json()
    point = out["points"][0]
    assert point["name"] == "reading"
    for eye in ("right", "left"):
        assert isinstance(point[eye]["base_in"], float)
        assert isinstance(point[eye]["base_up"], float)
    net = point["net"]
    assert net["horizontal_base_in"] == point["right"]["base_in"] + point["left"]["base_in"]
    assert net["vertical_base_up_right"] == point["right"]["base_up"] - point["left"]["base_up"]
    # Left -1.00 DS, 10 mm down and 2 mm in: Prentice's rule (published law) gives
    # 1.00 base down and, a minus lens's base lying away from its centre, 0.20 base in.
    assert point["left"]["base_up"] == pytest.approx(-1.0)
    assert point["left"]["base_in"] == pytest.approx(0.2)


def test_standard_input_and_file_agree(tmp_path: Path) -> None:
    path = tmp_path / "case.json"
    path.write_text(json.dumps(MINIMUM))
    assert run_cli("evaluate", "-", stdin=json.dumps(MINIMUM)).json() == \
        run_cli("evaluate", str(path)).json()


def test_numbers_are_not_rounded() -> None:
    out = run_cli("evaluate", "-", stdin=json.dumps(MINIMUM)).json()
    value = out["points"][0]["right"]["base_up"]
    assert round(value, 2) != value


def test_prism_cylinder_axis_may_be_left_out() -> None:
    doc = {"right": {"sphere": 2}, "left": {"sphere": 2},
           "points": [{"name": "p", "right": {"in_mm": 0, "up_mm": -5},
                       "left": {"in_mm": 0, "up_mm": -5}}]}
    out = run_cli("evaluate", "-", stdin=json.dumps(doc)).json()
    assert out["points"][0]["right"]["base_up"] == pytest.approx(1.0)
    assert out["points"][0]["net"]["vertical_base_up_right"] == pytest.approx(0.0)


def test_points_from_the_fitting_when_left_out() -> None:
    doc = {"right": {"sphere": 0}, "left": {"sphere": 0},
           "fitting": {"right": {"mono_pd_mm": 31.5}, "left": {"mono_pd_mm": 31.5}}}
    out = run_cli("evaluate", "-", stdin=json.dumps(doc)).json()
    names = [p["name"] for p in out["points"]]
    assert names == ["distance", "near"]
    near = out["points"][1]["position"]
    # Derived (docs/sources.md): PD 63 at 400 mm, s 27 mm, plano: near CD 59.02.
    assert 63 - near["right"]["in_mm"] - near["left"]["in_mm"] == pytest.approx(59.02, abs=0.005)
    assert near["right"]["up_mm"] == -10  # common practice default reading depth


@pytest.mark.parametrize("example", sorted((ROOT / "examples").glob("*.json")),
                         ids=lambda p: p.stem)
def test_examples_evaluate(example: Path) -> None:
    run = run_cli("evaluate", str(example))
    assert run.code == 0, run.stderr
    text = run_cli("evaluate", "--text", str(example))
    assert text.code == 0 and "net" in text.stdout and "verify" in text.stdout


def test_help_speaks_the_trade() -> None:
    run = run_cli("evaluate", "--help")
    assert run.code == 0
    for words in ("base in", "base up", "toward the nose", "standard input"):
        assert words in run.stdout
