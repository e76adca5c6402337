"""The quick ways of the core against the careful ways they stand in for, over generated
cases: every quick path must give the very same values (to the bit, and the same sign
of zero) as the slower path it replaced.

- no negative zero anywhere in a result, now that numbers are made without one at the
  source, is checked by the old walk (``without_negative_zero``) changing nothing;
  IEEE 754 round-to-nearest makes -0.0 + 0.0 = +0.0, which the sources rely on;
- the map's rows (``NetSampler.row``, ``LensSampler.unprescribed_row``: the prism is
  linear across a row within one zone, Prentice's rule) are the cells sampled one by
  one (``NetSampler.at``, ``LensSampler.unprescribed_at``), and the induced vertical
  alone (``NetSampler.induced_vertical_at``) is the one ``at`` gives;
- the quick JSON reader gives the document the careful reader (a check per value)
  gives, and declines every document the careful reader refuses;
- ``Prism.trusted`` is the checked ``Prism``; a lens read lately and kept is the lens
  read afresh, and a refusal is said again each time;
- a remedy's finished case read with the case it came from (``read_case(document,
  known)``: the parts the remedy left alone taken as read already) is the finished case
  read afresh, and an edit the strict reader refuses is refused with the same words;
  the copies of a case's document that the remedies edit leave the case's own alone.
"""

from __future__ import annotations

import copy
import json
import math
from typing import Any

import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from pycore.documents import json_input
from pycore.documents.cases import Case, _read_lens_kept, read_case, read_case_text, read_lens
from pycore.errors import CaseError
from pycore.evaluate import LIVE_SECTIONS, SECTIONS, evaluate
from pycore.optics.prism import Prism
from pycore.reading.imbalance_map import NetSampler, _steps
from pycore.reading.options import options_of
from pycore.reading.reading_point import reading_geometry
from pycore.reading.remedies.finished_case import copy_document
from pycore.rounding import without_negative_zero
from pycore.spectacles.sampler import LensSampler

ZEROS = st.sampled_from([0, 0.0, -0.0])


def _or_zero(values: st.SearchStrategy[Any]) -> st.SearchStrategy[Any]:
    """Values, often a zero written three ways (0, 0.0 and -0.0)."""
    return st.one_of(ZEROS, values)


def _quarter(low: float, high: float) -> st.SearchStrategy[float]:
    return st.integers(int(low * 4), int(high * 4)).map(lambda q: q / 4)


@st.composite
def lenses(draw: st.DrawFn, kind: str, shape: str | None) -> dict[str, Any]:
    lens: dict[str, Any] = {"sphere": draw(_or_zero(_quarter(-8, 8))),
                            "cylinder": draw(_or_zero(_quarter(-3, 1))),
                            "axis": draw(_or_zero(st.integers(0, 180)))}
    if draw(st.booleans()):
        lens["prism"] = {"base_in": draw(_or_zero(st.floats(-3, 3))),
                         "base_up": draw(_or_zero(st.floats(-3, 3)))}
    if kind == "bifocal":
        lens["add"] = draw(st.sampled_from([1.0, 2.25, 3.0]))
        segment: dict[str, Any] = {"top_mm": draw(_or_zero(st.floats(-8, 1)))}
        if shape == "round":
            segment.update(shape=shape, diameter_mm=draw(st.sampled_from([22, 25, 28, 38])))
        elif shape == "flat_top":
            segment.update(shape=shape, width_mm=draw(st.sampled_from([25, 28, 35])))
        elif shape is not None:
            segment["shape"] = shape
        if draw(st.booleans()):
            segment["optical_centre_in_mm"] = draw(_or_zero(st.floats(-2, 3)))
        lens["segment"] = segment
        if draw(st.integers(0, 5)) == 0:
            lens["slab_off"] = {"base_up": draw(st.sampled_from([1.5, -1.0])),
                                "line_mm": draw(_or_zero(st.floats(-6, -1)))}
    if kind != "progressive" and draw(st.integers(0, 3)) == 0:   # lowered centres
        lens["optical_centre_mm"] = {"in_mm": draw(_or_zero(st.floats(-2, 2))),
                                     "up_mm": draw(_or_zero(st.floats(-8, 2)))}
    if kind == "progressive":
        lens["add"] = draw(st.sampled_from([1.0, 2.0, 2.75]))
        lens["progressive"] = {"thinning_prism_base_down": draw(_or_zero(st.just(1.25)))}
    return lens


@st.composite
def cases(draw: st.DrawFn) -> dict[str, Any]:
    """Invented cases of every lens kind, with zeros (and negative zeros) where they
    make a result's figure zero."""
    kind = draw(st.sampled_from(["single_vision", "bifocal", "progressive"]))
    shape = draw(st.sampled_from([None, "round", "flat_top", "straight_across"]))
    document: dict[str, Any] = {"right": draw(lenses(kind, shape)),
                                "left": draw(lenses(kind, shape))}
    fitting: dict[str, Any] = {eye: {"mono_pd_mm": draw(st.floats(27, 36))}
                               for eye in ("right", "left")}
    if draw(st.booleans()):
        for eye in ("right", "left"):
            fitting[eye]["height_mm"] = draw(st.sampled_from([16, 20, 22.5]))
    document["fitting"] = fitting
    if draw(st.booleans()):
        point = {eye: {"in_mm": draw(_or_zero(st.floats(-10, 10))),
                       "up_mm": draw(_or_zero(st.floats(-15, 5)))}
                 for eye in ("right", "left")}
        document["points"] = ["distance", "near", {"name": "aside", **point}]
    if draw(st.booleans()):
        document["reading_zone"] = {
            "worn_as": draw(st.sampled_from(["spectacles", "reading_spectacles",
                                             "contact_lenses"])),
            "map_half_width_mm": draw(_or_zero(st.just(6.0)))}
    if draw(st.booleans()):
        document["frame"] = {"a_mm": 52, "dbl_mm": 18, "ed_mm": 58, "b_mm": 40}
    return document


def _case_or_none(document: dict[str, Any]) -> Any:
    try:
        return read_case(copy.deepcopy(document))
    except CaseError:
        return None


@settings(max_examples=60, deadline=None)
@given(cases())
def test_no_negative_zero_without_the_walk(document: dict[str, Any]) -> None:
    """The walk that used to clear negative zeros from every result finds none."""
    case = _case_or_none(document)
    if case is None:
        return
    # Read from text too: its remedies' finished cases share the document's own values.
    for read in (case, read_case_text(json.dumps(document))):
        for sections in (LIVE_SECTIONS, SECTIONS):
            try:
                result = evaluate(read, sections)
            except CaseError:
                return
            text = json.dumps(result, allow_nan=False)
            walked = json.dumps(without_negative_zero(copy.deepcopy(result)), allow_nan=False)
            assert text == walked


@settings(max_examples=60, deadline=None)
@given(cases())
def test_map_rows_are_the_sampled_cells(document: dict[str, Any]) -> None:
    case = _case_or_none(document)
    if case is None:
        return
    try:
        geometry = reading_geometry(case)
    except CaseError:
        return
    sampler = NetSampler(case, geometry)
    options = options_of(case)
    laterals = _steps(-options.map_half_width_mm, options.map_half_width_mm,
                      options.map_step_mm) if options.map_half_width_mm > 0 else [0.0]
    for drop in _steps(0.0, 20.0, 2.0):
        vertical, induced, horizontal, zones_r, zones_l = sampler.row(drop, laterals)
        cells = [sampler.at(drop, lateral) for lateral in laterals]
        assert [repr(v) for v in vertical] == [repr(c.vertical) for c in cells]
        assert [repr(v) for v in induced] == [repr(c.induced_vertical) for c in cells]
        assert [repr(v) for v in horizontal] == [repr(c.horizontal) for c in cells]
        assert zones_r == [c.zones[0] for c in cells]
        assert zones_l == [c.zones[1] for c in cells]


@settings(max_examples=100, deadline=None)
@given(cases(), st.sampled_from(["right", "left"]), st.floats(-30, 10),
       st.lists(st.floats(-20, 20), min_size=1, max_size=12))
def test_a_lens_row_is_its_points(document: dict[str, Any], eye: str, up_mm: float,
                                  ins_mm: list[float]) -> None:
    """Each eye's row at one height (``unprescribed_row``) is the points sampled one by one,
    in every zone: distance, segment (in and out of its outline), corridor and near."""
    case = _case_or_none(document)
    if case is None:
        return
    sampler = LensSampler(case.lens(eye), eye)  # type: ignore[arg-type]
    row = sampler.unprescribed_row(ins_mm, up_mm)
    points = [sampler.unprescribed_at(in_mm, up_mm) for in_mm in ins_mm]
    assert [(repr(a), repr(b), zone) for a, b, zone in row] == \
        [(repr(a), repr(b), zone) for a, b, zone in points]


JSON_VALUES = st.recursive(
    st.one_of(st.none(), st.booleans(), st.integers(-10**6, 10**6), ZEROS,
              st.floats(allow_nan=False, allow_infinity=False), st.text(max_size=6)),
    lambda inner: st.one_of(st.lists(inner, max_size=4),
                            st.dictionaries(st.text(max_size=4), inner, max_size=4)),
    max_leaves=20)


@settings(max_examples=200, deadline=None)
@given(st.one_of(st.lists(JSON_VALUES, max_size=4),
                 st.dictionaries(st.text(max_size=4), JSON_VALUES, max_size=4)))
def test_quick_reader_gives_the_careful_document(document: Any) -> None:
    text = json.dumps(document)
    careful = json_input._read_carefully(text, "The case", json_input.MAX_NESTING)
    found = json_input._plain_document(text, json_input.MAX_NESTING)
    if found is not None:
        assert json.dumps(found[0]) == json.dumps(careful)
    assert json.dumps(json_input.load_json(text)) == json.dumps(careful)


@pytest.mark.parametrize("text", [
    '{"a": 1, "a": 2}', '{"a": NaN}', '{"a": Infinity}', '{"a": 1e999}',
    '{"a": ' + "9" * 500 + "}", "[" * 40 + "]" * 40, '{"a": [1, {"b": -Infinity}]}',
])
def test_quick_reader_declines_what_the_careful_reader_refuses(text: str) -> None:
    """The documents docs/case-format.md ("Reading files") says are refused."""
    assert json_input._plain_document(text, json_input.MAX_NESTING) is None
    with pytest.raises(CaseError):
        json_input.load_json(text)


@given(st.floats(-30, 30), st.floats(-30, 30))
def test_trusted_prism_is_the_checked_prism(base_in: float, base_up: float) -> None:
    trusted, checked = Prism.trusted(base_in, base_up), Prism(base_in, base_up)
    assert trusted == checked
    for a, b in ((trusted.base_in, checked.base_in), (trusted.base_up, checked.base_up)):
        assert math.copysign(1.0, a) == math.copysign(1.0, b) == (1.0 if a >= 0 else -1.0)


@settings(max_examples=40, deadline=None)
@given(cases(), st.floats(0.0, 30.0))
def test_the_induced_vertical_alone_is_the_net_sampled(document: dict[str, Any],
                                                       drop: float) -> None:
    case = _case_or_none(document)
    if case is None:
        return
    try:
        sampler = NetSampler(case, reading_geometry(case))
        expected = sampler.at(drop).induced_vertical
    except CaseError:
        return
    assert repr(sampler.induced_vertical_at(drop)) == repr(expected)


@settings(max_examples=40, deadline=None)
@given(cases(), st.sampled_from([None, 20.0]))
def test_a_kept_lens_is_the_lens_read_afresh(document: dict[str, Any],
                                             height: float | None) -> None:
    value = document["right"]
    try:
        fresh = read_lens(copy.deepcopy(value), "right", height)
    except CaseError as exc:
        for _ in range(2):  # refused each time, with the same words
            with pytest.raises(CaseError) as again:
                _read_lens_kept(copy.deepcopy(value), "right", height)
            assert again.value.message == exc.message
        return
    assert _read_lens_kept(copy.deepcopy(value), "right", height) == fresh
    assert _read_lens_kept(copy.deepcopy(value), "right", height) == fresh


@settings(max_examples=40, deadline=None)
@given(cases())
def test_a_finished_case_read_with_its_original_is_read_afresh(
        document: dict[str, Any]) -> None:
    case = _case_or_none(document)
    if case is None:
        return
    try:
        result = evaluate(case)
    except CaseError:
        return
    remedies = result["remedies"]
    for entry in remedies["options"] if remedies is not None else []:
        applied = entry["applied_case"]
        if applied is None:
            continue
        assert read_case(copy.deepcopy(applied), case) == read_case(copy.deepcopy(applied))


@settings(max_examples=40, deadline=None)
@given(cases(), st.sampled_from([("right", "slab_off", {"base_up": 99.0, "line_mm": -3.0}),
                                 ("left", "add", -1.0),
                                 ("fitting", "right", {"mono_pd_mm": 5.0}),
                                 ("reading_zone", "worn_as", "goggles")]))
def test_an_edit_refused_afresh_is_refused_with_the_original(
        document: dict[str, Any], edit: tuple[str, str, Any]) -> None:
    case = _case_or_none(document)
    if case is None:
        return
    part, key, value = edit
    edited = copy_document(case)
    edited[part] = {**edited.get(part, {}), key: value}
    with pytest.raises(CaseError) as afresh:
        read_case(copy.deepcopy(edited))
    with pytest.raises(CaseError) as known:
        read_case(edited, case)
    assert (known.value.field, known.value.message) == (afresh.value.field,
                                                        afresh.value.message)


@settings(max_examples=30, deadline=None)
@given(cases())
def test_edited_copies_leave_the_case_document_alone(document: dict[str, Any]) -> None:
    case = _case_or_none(document)
    if case is None:
        return
    _copies_leave_the_document_alone(case)
    # Read from text, the document is plain already and its copies share its values.
    from_text = read_case_text(json.dumps(document))
    assert from_text.plain_document
    _copies_leave_the_document_alone(from_text)


def _copies_leave_the_document_alone(case: Case) -> None:
    before = json.dumps(case.document, sort_keys=True)
    first, second = copy_document(case), copy_document(case)
    for eye in ("right", "left"):
        first[eye]["slab_off"] = {"base_up": 1.0, "line_mm": -4.0}
        first[eye].pop("prism", None)
    first["reading_zone"] = {"worn_as": "contact_lenses"}
    first["points"] = ["near"]
    assert json.dumps(case.document, sort_keys=True) == before
    assert json.dumps(second, sort_keys=True) == json.dumps(copy_document(case), sort_keys=True)
    assert second["right"] is not first["right"] and second["left"] is not first["left"]
