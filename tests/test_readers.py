"""Ready-made readers: prism per stock pair, ranking, suitability, stock CSV, hand-out.

Check values name their source beside them. Limit values: ISO 16034 via a
secondary source quoting the standard (0.33 horizontal per lens, 0.33
vertical); Optom Vis Sci 2007; 84(11):1053-9 (low-resource settings: 1.0 base
out or in, 0.5 vertical). The demo stock is invented.
"""

from __future__ import annotations

import copy
import json
from typing import Any

import pytest
from cli_runner import check_refusal_in_process
from hypothesis import given, settings
from hypothesis import strategies as st

from pycore.checks.reader_limits import limit_set
from pycore.checks.reader_stock import (
    StockPair,
    hand_out,
    parse_stock_csv,
    read_stock,
    stock_from_csv,
    stock_to_csv,
    undo_hand_out,
)
from pycore.checks.readers import fit_pair, read_wearer, readers_request
from pycore.errors import CaseError
from pycore.interfaces.cli import main
from pycore.spectacles.fitting import near_inset_mm

STOCK = [
    {"id": "N66", "power": 2.5, "oc_distance_mm": 66, "frame_size": "54-18", "count": 3},
    {"id": "N60", "power": 2.5, "oc_distance_mm": 60, "frame_size": "50-16", "count": 2},
    {"id": "N62", "power": 2.5, "oc_distance_mm": 62, "frame_size": "50-18", "count": 0},
    {"id": "M60", "power": 2.0, "oc_distance_mm": 60, "frame_size": "50-16", "count": 5},
]


def request(**changes: Any) -> dict[str, Any]:
    doc: dict[str, Any] = {
        "wearer": {"near_pd_mm": 60, "right": {"rx": "+2.50 DS"}, "left": {"rx": "+2.50 DS"}},
        "stock": copy.deepcopy(STOCK), "limits": "iso-16034-2002"}
    doc.update(changes)
    return doc


def entry(result: dict[str, Any], pair_id: str) -> dict[str, Any]:
    return next(e for e in result["pairs"] if e["id"] == pair_id)


# --------------------------------------------------------------------------- check values


def test_readers_example_066_on_near_cd_60() -> None:
    """Derived by Prentice's rule (docs/sources.md, ready-made readers): +2.50 readers with
    OCs 66 mm apart, near CD 60: 3 mm per eye outward, 0.75 base out each, 1.5 total."""
    result = readers_request(request())
    a = entry(result, "N66")
    assert a["visual_point_in_from_oc_mm"] == {"right": pytest.approx(3.0),
                                               "left": pytest.approx(3.0)}
    for eye in ("right", "left"):
        assert a["prism"][eye]["base_in"] == pytest.approx(-0.75)  # 0.75 base out
    assert a["net"]["horizontal_base_in"] == pytest.approx(-1.5)  # 1.5 base out total
    checks = {c["quantity"]: c for c in a["checks"]}
    assert checks["horizontal_per_lens"]["limit"] == 0.33  # ISO 16034 (secondary source)
    assert checks["vertical_imbalance"]["limit"] == 0.33  # ISO 16034 (secondary source)
    assert checks["horizontal_per_lens"]["pass"] is False
    low = readers_request(request(limits="low-resource-2007"))
    checks = {c["quantity"]: c for c in entry(low, "N66")["checks"]}
    assert checks["horizontal_total_base_out"]["limit"] == 1.0  # Optom Vis Sci 2007
    assert checks["vertical_imbalance"]["limit"] == 0.5  # Optom Vis Sci 2007
    assert checks["horizontal_total_base_out"]["margin"] == pytest.approx(-0.5)


def test_matching_pair_ranks_first_and_out_of_stock_is_skipped() -> None:
    result = readers_request(request())
    assert [e["id"] for e in result["ranked"]] == ["N60"]
    assert result["ranked"][0]["rank"] == 1
    assert "none on hand" in entry(result, "N62")["why_not"]
    assert entry(result, "M60")["power_matches"] is False
    assert result["ready_made_suits"] and not result["custom_needed"]


def test_near_cd_from_distance_pd_uses_the_lead_inset() -> None:
    """Near CD from distance PD by pycore.spectacles.fitting.near_inset_mm, for the pair's power."""
    wearer = read_wearer({"distance_pd_mm": 64, "working_distance_mm": 400,
                          "right": {"rx": "+2.50 DS"}, "left": {"rx": "+2.50 DS"}})
    fit = fit_pair(wearer, StockPair("X", 2.5, 60.0, "", 1))
    inset = near_inset_mm(32, 400, 27, 2.5)
    assert fit.near_monos_mm == pytest.approx((32 - inset, 32 - inset))
    # plano check of the inset rule (docs/sources.md): PD 63, W 400, s 27 -> near CD 59.02
    assert 63 - 2 * near_inset_mm(31.5, 400, 27) == pytest.approx(59.02, abs=0.01)


def test_vertical_imbalance_from_unequal_pupil_heights() -> None:
    """Prentice: +3.00 readers, right pupil 2 mm higher: 3 x 0.2 = 0.6 imbalance."""
    wearer = read_wearer({"near_pd_mm": 60, "right_eye_higher_mm": 2,
                          "right": {"rx": "+3.00 DS"}, "left": {"rx": "+3.00 DS"}})
    fit = fit_pair(wearer, StockPair("X", 3.0, 60.0, "", 1))
    assert abs(fit.net.vertical_base_up_right) == pytest.approx(0.6)
    # plus lens: above the optical centre the base is down
    assert fit.prisms[0].base_up == pytest.approx(-0.3)


@pytest.mark.parametrize(("right", "left", "code"), [
    ("+2.50 DS", "+1.00 DS", "anisometropia"),
    ("+2.50 / -1.50 x 90", "+2.50 DS", "astigmatism"),
    ("-1.00 DS", "-1.00 DS", "not_plus"),
])
def test_custom_spectacles_needed(right: str, left: str, code: str) -> None:
    result = readers_request(request(wearer={"near_pd_mm": 60, "right": {"rx": right},
                                             "left": {"rx": left}}))
    assert result["custom_needed"] and not result["ready_made_suits"]
    assert code in [r["code"] for r in result["reasons"]]
    assert result["ranked"] == []


def test_too_much_prism_and_power_not_in_stock() -> None:
    only_wide = [STOCK[0]]
    result = readers_request(request(stock=only_wide))
    assert [r["code"] for r in result["reasons"]] == ["too_much_prism"]
    result = readers_request(request(stock=[STOCK[3]]))
    assert [r["code"] for r in result["reasons"]] == ["power_not_in_stock"]


def test_suitability_can_be_set_per_request() -> None:
    result = readers_request(request(
        wearer={"near_pd_mm": 60, "right": {"rx": "+2.50 DS"}, "left": {"rx": "+2.00 DS"}},
        suitability={"max_anisometropia_d": 0.25}))
    assert "anisometropia" in [r["code"] for r in result["reasons"]]
    assert result["suitability"]["certainty"] == "set by the user"


# --------------------------------------------------------------------------- properties

reader_powers = st.sampled_from([x / 4 for x in range(4, 15)])
ocs = st.integers(min_value=52, max_value=74).map(float)


@settings(max_examples=80, deadline=None)
@given(reader_powers, st.floats(min_value=50, max_value=72).map(lambda x: round(x, 1)),
       st.lists(ocs, min_size=1, max_size=6))
def test_pair_matching_near_cd_ranks_first(power: float, near_cd: float,
                                           others: list[float]) -> None:
    """A plano-symmetric wearer (equal spherical near powers, centred pupils): a pair of the
    right power whose optical centres match the near CD ranks first."""
    stock = [{"id": f"P{i}", "power": power, "oc_distance_mm": oc, "count": 1}
             for i, oc in enumerate(others)]
    stock.append({"id": "MATCH", "power": power, "oc_distance_mm": near_cd, "count": 1})
    rx = f"{power:+.2f} DS"
    result = readers_request({"wearer": {"near_pd_mm": near_cd, "right": {"rx": rx},
                                         "left": {"rx": rx}},
                              "stock": stock, "limits": "low-resource-2007"})
    first = result["ranked"][0]
    assert first["worst_share"] == pytest.approx(0.0, abs=1e-9)
    assert first["id"] == "MATCH" or first["oc_distance_mm"] == pytest.approx(near_cd)


@settings(max_examples=80, deadline=None)
@given(reader_powers, ocs, st.floats(min_value=50, max_value=72))
def test_wider_centres_give_base_out_with_plus(power: float, oc: float, near_cd: float) -> None:
    """Prentice: plus lenses, OCs wider than the near CD -> base out, symmetric."""
    wearer = read_wearer({"near_pd_mm": near_cd, "right": {"sphere": power},
                          "left": {"sphere": power}})
    fit = fit_pair(wearer, StockPair("X", power, oc, "", 1))
    expected = -power * (oc - near_cd) / 20.0
    for prism in fit.prisms:
        assert prism.base_in == pytest.approx(expected, abs=1e-9)
    assert fit.net.vertical_base_up_right == pytest.approx(0.0, abs=1e-12)


@settings(max_examples=60, deadline=None)
@given(st.lists(st.tuples(reader_powers, ocs, st.integers(0, 50)), min_size=1, max_size=8),
       st.data())
def test_hand_out_then_undo_restores_the_stock(rows: list[tuple[float, float, int]],
                                               data: st.DataObject) -> None:
    stock = tuple(StockPair(f"S{i}", p, oc, "", n) for i, (p, oc, n) in enumerate(rows))
    pick = data.draw(st.sampled_from(stock))
    if pick.count == 0:
        with pytest.raises(CaseError):
            hand_out(stock, pick.id)
        return
    after, record = hand_out(stock, pick.id)
    assert sum(p.count for p in after) == sum(p.count for p in stock) - 1
    assert record == {"id": pick.id, "count_after": pick.count - 1}
    assert undo_hand_out(after, record) == stock


@settings(max_examples=60, deadline=None)
@given(st.lists(st.tuples(st.sampled_from([x / 8 for x in range(2, 48)]), ocs,
                          st.integers(0, 999), st.sampled_from(["", "50-18", "M, wide"])),
                min_size=0, max_size=8))
def test_stock_csv_round_trip(rows: list[tuple[float, float, int, str]]) -> None:
    stock = tuple(StockPair(f"S{i}", p, oc, frame, n)
                  for i, (p, oc, n, frame) in enumerate(rows))
    pairs, problems = parse_stock_csv(stock_to_csv(stock))
    assert problems == () and pairs == stock


# --------------------------------------------------------------------------- stock CSV


def test_stock_csv_reports_line_and_field_and_keeps_good_rows() -> None:
    text = ("id,power,oc_distance_mm,frame_size,count\n"
            "A,+2.50,62,50-18,3\n"
            "B,plus two,60,,1\n"
            "\n"
            "C,2.00,99,,1\n"
            "A,2.00,60,,1\n"
            "D,2.00,60,,-1\n"
            "E,2.00 D,60 mm,,2\n")
    pairs, problems = parse_stock_csv(text)
    assert [p.id for p in pairs] == ["A", "E"]
    found = [(p.line, p.column) for p in problems]
    assert found == [(3, "power"), (5, "oc_distance_mm"), (6, "id"), (7, "count")]
    for problem in problems:
        assert problem.message.startswith(f"line {problem.line}, {problem.column}")
    with pytest.raises(CaseError) as caught:
        stock_from_csv(text)
    assert caught.value.field == "line 3.power" and "3 more rows" in caught.value.message


def test_stock_csv_semicolons_and_decimal_commas() -> None:
    pairs, problems = parse_stock_csv("ID;Power;OC_distance_mm;Count\nA;2,50;62;3\n")
    assert problems == () and pairs == (StockPair("A", 2.5, 62.0, "", 3),)


@pytest.mark.parametrize(("text", "line", "column"), [
    ("", 1, ""),
    ("id,power,count\nA,2,1\n", 1, "oc_distance_mm"),
    ("id,power,oc_distance_mm,count,price\n", 1, "price"),
    ("id,power,oc_distance_mm,count,count\n", 1, "count"),
    ("id,power,oc_distance_mm,count\nA,2,60,1,9\n", 2, ""),
    ("id,power,oc_distance_mm,count\n,2,60,1\n", 2, "id"),
    ("id,power,oc_distance_mm,count\nA,-2,60,1\n", 2, "power"),
    ("id,power,oc_distance_mm,count\nA,2,60,1.5\n", 2, "count"),
    ("id,power,oc_distance_mm,count\nA,2,,1\n", 2, "oc_distance_mm"),
])
def test_stock_csv_catalogue(text: str, line: int, column: str) -> None:
    _, problems = parse_stock_csv(text)
    assert problems and problems[0].line == line and problems[0].column == column


# --------------------------------------------------------------------------- CLI and refusals

GOOD = request()


def with_(path: str, value: Any) -> dict[str, Any]:
    doc = copy.deepcopy(GOOD)
    node: Any = doc
    parts = path.split(".")
    for part in parts[:-1]:
        node = node[int(part)] if isinstance(node, list) else node.setdefault(part, {})
    if value is _DROP:
        node.pop(parts[-1], None)
    elif isinstance(node, list):
        node[int(parts[-1])] = value
    else:
        node[parts[-1]] = value
    return doc


_DROP = object()

# (name, document, the field the message must name)
CATALOGUE: list[tuple[str, Any, str]] = [
    ("no wearer", with_("wearer", _DROP), "wearer"),
    ("no stock", with_("stock", _DROP), "stock"),
    ("unknown limits", with_("limits", "iso-1234"), "limits"),
    ("no right eye", with_("wearer.right", _DROP), "wearer.right"),
    ("bad rx", with_("wearer.left.rx", "+2.50 x"), "wearer.left.rx"),
    ("no pd", with_("wearer.near_pd_mm", _DROP), "wearer.distance_pd_mm"),
    ("two pds", with_("wearer.distance_pd_mm", 64), "wearer.distance_pd_mm"),
    ("one mono", with_("wearer.near_pd_mm", _DROP) | {"wearer": {
        "right": {"rx": "+2.50 DS", "mono_pd_mm": 32}, "left": {"rx": "+2.50 DS"}}},
     "wearer.left.mono_pd_mm"),
    ("near pd out of range", with_("wearer.near_pd_mm", 20), "wearer.near_pd_mm"),
    ("working distance text", with_("wearer.working_distance_mm", "40 cm"),
     "wearer.working_distance_mm"),
    ("eye height too far", with_("wearer.right_eye_higher_mm", 30),
     "wearer.right_eye_higher_mm"),
    ("unknown wearer key", with_("wearer.age", 60), "wearer.age"),
    ("stock not list", with_("stock", {"id": "A"}), "stock"),
    ("stock power missing", with_("stock.0.power", _DROP), "stock.0.power"),
    ("stock power minus", with_("stock.0.power", -2.5), "stock.0.power"),
    ("stock oc out of range", with_("stock.1.oc_distance_mm", 100), "stock.1.oc_distance_mm"),
    ("stock count fraction", with_("stock.1.count", 1.5), "stock.1.count"),
    ("stock count negative", with_("stock.1.count", -1), "stock.1.count"),
    ("stock duplicate id", with_("stock.1.id", "N66"), "stock.1.id"),
    ("stock unknown key", with_("stock.0.price", 3), "stock.0.price"),
    ("suitability too big", with_("suitability", {"max_cylinder_d": 9}),
     "suitability.max_cylinder_d"),
    ("not an object", [1], ""),
]


@pytest.mark.parametrize(("name", "document", "field"), CATALOGUE,
                         ids=[c[0] for c in CATALOGUE])
def test_bad_input_catalogue(name: str, document: Any, field: str,
                             capsys: pytest.CaptureFixture[str],
                             monkeypatch: pytest.MonkeyPatch) -> None:
    check_refusal_in_process("readers", name, document, field, readers_request, capsys,
                             monkeypatch)


def test_cli_with_stock_csv(tmp_path: Any, capsys: pytest.CaptureFixture[str]) -> None:
    wearer = tmp_path / "wearer.json"
    wearer.write_text(json.dumps({"wearer": GOOD["wearer"]}))
    stock = tmp_path / "stock.csv"
    stock.write_text(stock_to_csv(read_stock(STOCK)))
    assert main(["readers", str(wearer), "--stock", str(stock), "--text"]) == 0
    out = capsys.readouterr().out
    assert "1. N60" in out and "ISO 16034" in out
    bad = tmp_path / "bad.csv"
    bad.write_text("id,power,oc_distance_mm,count\nA,2,60,x\n")
    assert main(["readers", str(wearer), "--stock", str(bad)]) == 2
    out, err = capsys.readouterr()
    assert out == "" and "line 2, count" in err
    assert main(["readers", "--list-limits", "--text"]) == 0
    assert "Optom Vis Sci 2007" in capsys.readouterr().out


def test_limit_sets_carry_their_sources() -> None:
    assert "secondary source" in limit_set("iso-16034-2002").source.lower()
    assert "84(11):1053-9" in limit_set("low-resource-2007").source


def test_worker_actions_stock_cycle() -> None:
    from pycore.interfaces.bridge import handle

    def call(name: str, payload: Any) -> dict[str, Any]:
        reply: dict[str, Any] = json.loads(handle(json.dumps({"action": name,
                                                               "payload": payload})))
        return reply

    imported = call("readers_stock_import", {"csv": stock_to_csv(read_stock(STOCK))
                                             + "BAD,x,60,,1\n"})["result"]
    assert len(imported["stock"]) == 4 and imported["errors"][0]["field"] == "line 6.power"
    given_out = call("readers_hand_out", {"stock": imported["stock"], "id": "N60"})["result"]
    assert entry({"pairs": given_out["stock"]}, "N60")["count"] == 1
    back = call("readers_undo", {"stock": given_out["stock"], "undo": given_out["undo"]})
    assert back["result"]["stock"] == imported["stock"]
    empty = call("readers_hand_out", {"stock": imported["stock"], "id": "N62"})
    assert not empty["ok"] and empty["error"]["field"] == "id"
    ranked = call("readers_rank", GOOD)["result"]
    assert ranked["ranked"][0]["id"] == "N60" and "1. N60" in ranked["text"]
    exported = call("readers_stock_export", {"stock": imported["stock"]})["result"]["csv"]
    assert exported.splitlines()[0] == "id,power,oc_distance_mm,frame_size,count"
    sets = call("readers_limit_sets", {})["result"]["limit_sets"]
    assert {s["id"] for s in sets} == {"iso-16034-2002", "low-resource-2007"}
