"""Verification of finished spectacles against the prism tolerance tables.

Check values name their source beside them. "ANSI QRG" is the "Quick
Reference Guide - ANSI Z80.1-2015" (a laboratory's summary, reproduced on
docslib), which agrees with the OptiCampus summary of Z80.1-2010; the
progressive row is ANSI Z80.1-1999 as reproduced on a laboratory's web page;
ISO 21987 values are from memory (as the data file says).
"""

from __future__ import annotations

import copy
import json
from typing import Any

import pytest
from casebook import DROP, changed
from cli_runner import check_refusal_in_process
from hypothesis import given, settings
from hypothesis import strategies as st

import pycore.extensions  # noqa: F401  (registers the verification section)
from pycore.cases import read_case
from pycore.cli import main
from pycore.datafiles import data_names, load_table
from pycore.evaluate import evaluate
from pycore.tolerances import CERTAINTIES, tolerance_tables
from pycore.verification import verify
from pycore.verify_input import read_verification


def pair(right_rx: str, left_rx: str, measured: dict[str, Any], **settings_: Any) -> dict[str, Any]:
    doc: dict[str, Any] = {
        "ordered": {"right": {"rx": right_rx, "mono_pd_mm": 32, "height_mm": 22},
                    "left": {"rx": left_rx, "mono_pd_mm": 32, "height_mm": 22}},
        "measured": measured,
    }
    doc.update(settings_)
    return doc


def run(doc: dict[str, Any]) -> dict[str, Any]:
    return verify(read_verification(copy.deepcopy(doc)))


def verdict(result: dict[str, Any], criterion: str) -> dict[str, Any]:
    return next(v for v in result["verdicts"] if v["criterion"] == criterion)


# --------------------------------------------------------------------------- data tables


def test_every_tolerance_table_carries_its_source_and_certainty() -> None:
    tables = tolerance_tables()
    assert {"ansi-z80.1-2015", "iso-21987-2009", "bs-2738-1985"} <= set(tables)
    for table in tables.values():
        assert table.source and table.certainty in CERTAINTIES
        for row in table.rows:
            assert row.source and row.certainty in CERTAINTIES
    assert tables["iso-21987-2009"].unverified  # from memory (domain sources)
    assert not tables["ansi-z80.1-2015"].unverified


def test_tables_load_as_package_resources() -> None:
    """importlib.resources, so they work from the wheel Pyodide loads."""
    names = data_names()
    assert "tolerance-ansi-z80.1-2015" in names
    assert load_table("tolerance-ansi-z80.1-2015")["id"] == "ansi-z80.1-2015"


def test_no_tolerance_number_in_the_logic() -> None:
    """The limits live in the data files: no tolerance value is a literal in the logic."""
    import ast
    from pathlib import Path

    limits = {0.33, 0.67, 3.375, 2.75, 3.75, 3.25, 2.5, 0.25, 0.13, 0.15, 0.16, 0.18, 6.5}
    for name in ("verification.py", "verify_input.py", "tolerances.py", "readers.py",
                 "reader_limits.py", "lens_check.py", "lens_tolerances.py",
                 "wearer_effects.py"):
        tree = ast.parse((Path(__file__).resolve().parent.parent / "pycore" / name).read_text())
        numbers = {node.value for node in ast.walk(tree)
                   if isinstance(node, ast.Constant) and isinstance(node.value, float)}
        assert not numbers & limits, (name, numbers & limits)


# --------------------------------------------------------------------------- ANSI rows


def test_ansi_vertical_033_up_to_3375() -> None:
    """ANSI QRG: vertical imbalance <= 0.33 for powers up to +-3.375 D."""
    ok = run(pair("-3.375 DS", "-3.00 DS", {"right": {"prism": "0.33 BU"}}))
    assert verdict(ok, "vertical")["status"] == "pass"
    assert verdict(ok, "vertical")["limit"] == 0.33  # ANSI QRG
    assert verdict(ok, "vertical")["margin"] == pytest.approx(0.0)
    bad = run(pair("-3.375 DS", "-3.00 DS", {"right": {"prism": "0.34 BU"}}))
    assert verdict(bad, "vertical")["status"] == "fail"
    assert bad["result"] == "fail"
    assert verdict(bad, "vertical")["margin"] == pytest.approx(-0.01)


def test_ansi_vertical_switches_to_1mm_above_3375() -> None:
    """ANSI QRG: above +-3.375 D, PRP heights within 1.0 mm of each other."""
    doc = pair("-3.50 DS", "-3.50 DS",
               {"right": {"height_mm": 22.9}, "left": {"height_mm": 22.0}})
    result = run(doc)
    v = verdict(result, "vertical")
    assert v["quantity"] == "height_difference" and v["unit"] == "mm"
    assert v["limit"] == 1.0  # ANSI QRG
    assert v["value"] == pytest.approx(0.9) and v["status"] == "pass"
    doc["measured"]["right"]["height_mm"] = 23.2
    assert verdict(run(doc), "vertical")["status"] == "fail"
    # the same 1.2 mm at -3.00 D is 0.36 prism dioptres (Prentice): judged as prism
    low = run(pair("-3.00 DS", "-3.00 DS",
                   {"right": {"height_mm": 23.2}, "left": {"height_mm": 22.0}}))
    assert verdict(low, "vertical")["quantity"] == "vertical_imbalance"
    assert verdict(low, "vertical")["value"] == pytest.approx(0.36)  # Prentice: 3 x 0.12


def test_ansi_horizontal_067_total_up_to_275_and_per_eye_reading() -> None:
    """ANSI QRG: horizontal <= 0.67 total up to +-2.75 D; the test method's 1/3 per eye."""
    measured = {"right": {"prism": "0.4 BI"}, "left": {"prism": "0.2 BI"}}
    total = run(pair("-2.75 DS", "-2.75 DS", measured))
    h = verdict(total, "horizontal")
    assert h["reading"] == "total" and h["value"] == pytest.approx(0.6)
    assert h["limit"] == 0.67 and h["status"] == "pass"  # ANSI QRG
    assert h["readings"]["per_eye"]["limit"] == 0.33  # ANSI QRG (test method, 1/3 each)
    assert h["readings"]["per_eye"]["pass"] is False
    per_eye = run(pair("-2.75 DS", "-2.75 DS", measured, horizontal_reading="per_eye"))
    h2 = verdict(per_eye, "horizontal")
    assert h2["reading"] == "per_eye" and h2["status"] == "fail"
    assert h2["value"] == pytest.approx(0.4)


def test_ansi_horizontal_switches_to_25mm_above_275() -> None:
    """ANSI QRG: above +-2.75 D, PRPs within +-2.5 mm of the specified PD."""
    doc = pair("+3.00 DS", "+3.00 DS", {"centre_distance_mm": 66.4})
    h = verdict(run(doc), "horizontal")
    assert h["quantity"] == "pd_difference" and h["limit"] == 2.5  # ANSI QRG
    assert h["value"] == pytest.approx(2.4) and h["status"] == "pass"
    doc["measured"]["centre_distance_mm"] = 61.4
    h = verdict(run(doc), "horizontal")
    assert h["value"] == pytest.approx(2.6) and h["status"] == "fail"
    assert "narrower" in h["in_words"]


def test_prism_read_at_the_ordered_pd_locates_the_reference_points() -> None:
    """Prentice: 0.9 base out at the specified point of a +3.00 lens = PRP 3 mm out."""
    result = run(pair("+3.00 DS", "+3.00 DS", {"right": {"prism": "0.9 BO"}}))
    assert result["eyes"]["right"]["prp_from_specified_mm"]["in_mm"] == pytest.approx(-3.0)
    h = verdict(result, "horizontal")
    assert h["value"] == pytest.approx(3.0) and h["status"] == "fail"


def test_progressive_row_thinning_taken_out_and_1mm_each() -> None:
    """ANSI Z80.1-1999 progressive row (as reproduced): 0.33 / 0.67 up to 3.375 / 3.75 D,
    1.0 mm at each reference point above; thinning prism taken out (Meister 1998: yoked
    base down)."""
    doc = pair("+1.00 DS", "+1.50 DS",
               {"right": {"prism": "1.2 BD"}, "left": {"prism": "1.2 BD, 0.2 BI"}},
               lens_type="progressive", thinning_base_down=1.2)
    result = run(doc)
    assert result["eyes"]["right"]["unwanted_prism"]["amount"] == pytest.approx(0.0)
    assert verdict(result, "vertical")["value"] == pytest.approx(0.0)
    assert verdict(result, "horizontal")["value"] == pytest.approx(0.2)
    assert verdict(result, "vertical")["certainty"] == "sourced, earlier edition"
    assert any("1999" in c for c in result["cautions"])
    high = pair("+4.00 DS", "+4.00 DS", {"right": {"mono_pd_mm": 33.2},
                                         "left": {"mono_pd_mm": 32.5}},
                lens_type="progressive")
    h = verdict(run(high), "horizontal")
    assert h["quantity"] == "pd_each" and h["limit"] == 1.0  # Z80.1-1999 row
    assert h["value"] == pytest.approx(1.2) and h["status"] == "fail"
    assert h["per_eye"] == {"right": pytest.approx(1.2), "left": pytest.approx(0.5)}


def test_unmounted_either_limit_suffices() -> None:
    """ANSI QRG: unmounted, prism at the PRP <= 0.33, or the PRP within 1.0 mm."""
    doc: dict[str, Any] = {"mounting": "unmounted",
           "ordered": {"right": {"rx": "-6.00 DS"}},
           "measured": {"right": {"prism": "0.5 BI"}}}
    result = run(doc)
    single = result["verdicts"][0]
    assert single["criterion"] == "single_lens" and single["eye"] == "right"
    # 0.5 prism dioptres fails 0.33, but 0.5 / 6 cm = 0.83 mm passes 1.0 mm (Prentice)
    assert single["status"] == "pass" and single["quantity"] == "prp_position"
    assert single["value"] == pytest.approx(0.8333, abs=1e-3)
    doc["ordered"]["right"]["rx"] = "-2.00 DS"  # 2.5 mm
    assert run(doc)["verdicts"][0]["status"] == "fail"


def test_iso_21987_verdicts_are_flagged_unverified() -> None:
    """ISO 21987 values from memory: every verdict says so (domain sources)."""
    result = run(pair("-1.00 DS", "-1.00 DS", {"right": {"prism": "0.4 BU"}},
                      standard="iso-21987-2009"))
    assert result["unverified"] is True
    assert all(v["unverified"] for v in result["verdicts"])
    assert verdict(result, "vertical")["limit"] == 0.5  # from memory
    assert verdict(result, "vertical")["status"] == "pass"
    assert "from memory" in result["cautions"][0]


def test_bs_2738_historical_row() -> None:
    """Optician CPD article: BS 2738:1985 allowed 0.25 vertical, 1.00 horizontal."""
    result = run(pair("-6.00 DS", "-6.00 DS", {"right": {"prism": "0.3 BU, 0.9 BO"}},
                      standard="bs-2738-1985"))
    assert verdict(result, "vertical")["limit"] == 0.25
    assert verdict(result, "vertical")["status"] == "fail"
    assert verdict(result, "horizontal")["limit"] == 1.0
    assert verdict(result, "horizontal")["status"] == "pass"


def test_nothing_measured_for_a_criterion_is_not_judged() -> None:
    result = run(pair("-1.00 DS", "-1.00 DS", {"right": {"height_mm": 22}, "left":
                                                {"height_mm": 22}}))
    assert verdict(result, "horizontal")["status"] == "not_judged"
    assert result["result"] == "incomplete"


def test_case_section_reports_through_evaluate() -> None:
    case = {"right": {"rx": "-2.00 DS"}, "left": {"rx": "-2.00 DS"},
            "fitting": {"right": {"mono_pd_mm": 32, "height_mm": 20},
                        "left": {"mono_pd_mm": 31, "height_mm": 20}},
            "verification": {"measured": {"right": {"prism": "0.5 BU"}}}}
    result = evaluate(read_case(case))
    assert result["verification"]["result"] == "fail"
    assert result["verification"]["lens_type"] == "single_vision"
    assert result["verification"]["summary_lines"][0].startswith("Verification against")


# --------------------------------------------------------------------------- properties

powers = st.sampled_from([x / 4 for x in range(-40, 41)])
small = st.floats(min_value=-1.5, max_value=1.5, allow_nan=False).map(lambda x: round(x, 2))


@settings(max_examples=60, deadline=None)
@given(powers, powers, small, small, small, small)
def test_swapping_eyes_keeps_the_verdicts(fr: float, fl: float, rin: float, rup: float,
                                          lin: float, lup: float) -> None:
    """Mirror symmetry: swapping right and left changes no value and no verdict."""
    measured = {"right": {"prism": {"base_in": rin, "base_up": rup}},
                "left": {"prism": {"base_in": lin, "base_up": lup}}}
    a = run(pair(f"{fr:+.2f} DS", f"{fl:+.2f} DS", measured))
    b = run(pair(f"{fl:+.2f} DS", f"{fr:+.2f} DS",
                 {"right": measured["left"], "left": measured["right"]}))
    for va, vb in zip(a["verdicts"], b["verdicts"], strict=True):
        assert va["status"] == vb["status"]
        assert va["value"] == pytest.approx(vb["value"], abs=1e-9)


@settings(max_examples=60, deadline=None)
@given(powers, powers)
def test_finding_what_was_ordered_passes(fr: float, fl: float) -> None:
    """Measured = ordered: no unwanted prism, every verdict passes with its full margin."""
    result = run(pair(f"{fr:+.2f} DS", f"{fl:+.2f} DS",
                      {"right": {"prism": "0"}, "left": {"prism": "0"}}))
    assert result["result"] == "pass"
    for v in result["verdicts"]:
        assert v["margin"] == pytest.approx(v["limit"], abs=1e-9)


@settings(max_examples=60, deadline=None)
@given(st.sampled_from([x / 4 for x in range(-40, 41) if abs(x) >= 2]),
       st.floats(min_value=-4, max_value=4).map(lambda x: round(x, 1)))
def test_prism_and_position_views_agree(power: float, shift_mm: float) -> None:
    """Prentice both ways: a PRP decentred by c mm shows F c / 10 at the specified point."""
    by_position = run(pair(f"{power:+.2f} DS", f"{power:+.2f} DS",
                           {"right": {"mono_pd_mm": 32 + shift_mm},
                            "left": {"mono_pd_mm": 32}}))
    prism = by_position["eyes"]["right"]["unwanted_prism"]["base_in"]
    assert prism == pytest.approx(-power * shift_mm / 10.0, abs=1e-9)
    assert by_position["eyes"]["right"]["prp_from_specified_mm"]["in_mm"] == pytest.approx(
        -shift_mm, abs=1e-9)


# --------------------------------------------------------------------------- CLI and refusals

GOOD = pair("-2.00 DS", "-2.00 DS", {"right": {"prism": "0.25 BU"}})


def with_(path: str, value: Any, base: dict[str, Any] | None = None) -> dict[str, Any]:
    return changed(base if base is not None else GOOD, path, value)


_DROP = DROP
UNMOUNTED = {"mounting": "unmounted", "ordered": {"right": {"rx": "-2.00 DS"}},
             "measured": {"right": {"prism": "0.2 BI"}}}

# (name, document, the field the message must name)
CATALOGUE: list[tuple[str, Any, str]] = [
    ("unknown standard", with_("standard", "ansi-1999"), "standard"),
    ("unknown lens type", with_("lens_type", "bifocal"), "lens_type"),
    ("unknown mounting", with_("mounting", "loose"), "mounting"),
    ("unknown reading", with_("horizontal_reading", "both"), "horizontal_reading"),
    ("per eye reading on ISO", with_("horizontal_reading", "per_eye",
                                     with_("standard", "iso-21987-2009")),
     "horizontal_reading"),
    ("unmounted on ISO", with_("standard", "iso-21987-2009", UNMOUNTED), "mounting"),
    ("thinning on single vision", with_("thinning_base_down", 1.0), "thinning_base_down"),
    ("negative thinning", with_("thinning_base_down", -1, with_("lens_type", "progressive")),
     "thinning_base_down"),
    ("no ordered", with_("ordered", _DROP), "ordered"),
    ("ordered left missing", with_("ordered.left", _DROP), "ordered.left"),
    ("bad ordered rx", with_("ordered.right.rx", "-2.00 x"), "ordered.right.rx"),
    ("unsigned ordered rx", with_("ordered.right.rx", "2.00 DS"), "ordered.right.rx"),
    ("ordered rx and sphere", with_("ordered.right.sphere", -2), "ordered.right.rx"),
    ("ordered mono out of range", with_("ordered.right.mono_pd_mm", 60),
     "ordered.right.mono_pd_mm"),
    ("ordered one height", with_("ordered.left.height_mm", _DROP), "ordered.left.height_mm"),
    ("ordered pd and monos", with_("ordered.pd_mm", 64), "ordered.pd_mm"),
    ("unknown ordered key", with_("ordered.right.cyl", -1), "ordered.right.cyl"),
    ("no measured", with_("measured", _DROP), "measured"),
    ("empty measured", with_("measured", {}), "measured"),
    ("measured not object", with_("measured", [1]), "measured"),
    ("bad measured prism", with_("measured.right.prism", "0.25 BX"), "measured.right.prism"),
    ("measured prism number", with_("measured.right.prism", 0.25), "measured.right.prism"),
    ("measured height text", with_("measured.right.height_mm", "22"),
     "measured.right.height_mm"),
    ("measured centre and monos", with_("measured.centre_distance_mm", 64,
                                        with_("measured.right.mono_pd_mm", 32)),
     "measured.centre_distance_mm"),
    ("centre distance out of range", with_("measured.centre_distance_mm", 20),
     "measured.centre_distance_mm"),
    ("offset on mounted", with_("measured.right.offset", {"in_mm": 1}),
     "measured.right.offset"),
    ("offset too far", with_("measured.right.offset", {"in_mm": 30}, UNMOUNTED),
     "measured.right.offset.in_mm"),
    ("measured eye not ordered", with_("measured.left", {"prism": "0"}, UNMOUNTED),
     "measured.left"),
    ("unknown top key", with_("tolerance", 1), "tolerance"),
    ("not an object", [1, 2], ""),
    ("NaN", '{"ordered": NaN}', ""),
]


@pytest.mark.parametrize(("name", "document", "field"), CATALOGUE,
                         ids=[c[0] for c in CATALOGUE])
def test_bad_input_catalogue(name: str, document: Any, field: str,
                             capsys: pytest.CaptureFixture[str],
                             monkeypatch: pytest.MonkeyPatch) -> None:
    check_refusal_in_process("verify", name, document, field, read_verification, capsys,
                             monkeypatch)


def test_cli_text_and_list(capsys: pytest.CaptureFixture[str], tmp_path: Any) -> None:
    path = tmp_path / "pair.json"
    path.write_text(json.dumps(GOOD))
    assert main(["verify", str(path), "--text"]) == 0
    out = capsys.readouterr().out
    assert "Verification against ANSI Z80.1-2015: PASS" in out
    assert "reading used: total" in out
    assert main(["verify", "--list-standards", "--text"]) == 0
    out = capsys.readouterr().out
    assert "iso-21987-2009" in out and "FROM MEMORY" in out
    assert main(["verify", str(path), "--standard", "iso-21987-2009"]) == 0
    assert json.loads(capsys.readouterr().out)["unverified"] is True


def test_help_speaks_to_practitioners(capsys: pytest.CaptureFixture[str]) -> None:
    with pytest.raises(SystemExit):
        main(["verify", "--help"])
    out = capsys.readouterr().out
    assert "prism reference point" in out and "thinning prism" in out


def test_case_with_progressive_design_takes_its_thinning_prism_out() -> None:
    """A case's progressive design: judged as progressive, its thinning prism taken out."""
    eye = {"add": 2.0, "progressive": {"thinning_prism_base_down": 1.2}}
    case = {"right": {"rx": "+1.00 DS", **eye}, "left": {"rx": "+1.50 DS", **eye},
            "fitting": {"right": {"mono_pd_mm": 32}, "left": {"mono_pd_mm": 31}},
            "verification": {"measured": {"right": {"prism": "1.2 BD"},
                                          "left": {"prism": "1.5 BD"}}}}
    result = evaluate(read_case(case))["verification"]
    assert result["lens_type"] == "progressive"
    assert result["eyes"]["right"]["unwanted_prism"]["amount"] == pytest.approx(0.0)
    assert result["eyes"]["left"]["unwanted_prism"]["base_up"] == pytest.approx(-0.3)


def test_worker_actions() -> None:
    from pycore.bridge import handle

    reply = json.loads(handle(json.dumps({"action": "verify", "payload": GOOD})))
    assert reply["ok"] and reply["result"]["result"] == "pass"
    assert reply["result"]["text"].startswith("Prism Desk - verification")
    reply = json.loads(handle(json.dumps({"action": "verify_standards", "payload": {}})))
    ids = [t["id"] for t in reply["result"]["standards"]]
    assert "ansi-z80.1-2015" in ids
    reply = json.loads(handle(json.dumps({"action": "verify", "payload": with_(
        "standard", "nope")})))
    assert not reply["ok"] and reply["error"]["field"] == "standard"
