"""The browser worker's door into the core: named actions, JSON in and out.

``handle('{"action": "evaluate", "payload": {...}}')`` returns
``{"ok": true, "result": ...}`` or ``{"ok": false, "error": {"field", "message"}}``.
The protocol is documented in docs/worker-protocol.md.
"""

from __future__ import annotations

import json
import traceback
from collections import OrderedDict
from collections.abc import Callable
from typing import Any

from pycore import __version__
from pycore.documents.cases import MAX_DOCUMENT_BYTES, MAX_NESTING, load_json, read_case
from pycore.documents.fields import as_object, only_keys
from pycore.errors import CaseError
from pycore.evaluate import LIVE_SECTIONS, SECTIONS, evaluate
from pycore.interfaces import actions
from pycore.optics.eyes import EYES, Eye
from pycore.optics.notation import (
    parse_sphere,
    parse_written,
    written_prism,
)
from pycore.optics.power import written_axis, written_dioptres, written_sphere
from pycore.reading.remedies.side_by_side import opened_remedy


def _version(_payload: Any) -> dict[str, Any]:
    return {"version": __version__, "actions": sorted(ACTIONS)}


class ResultCache:
    """The last few results, keyed by the case's canonical JSON (keys sorted) and what
    was asked of it, so an unchanged input is answered without computing it again.
    Results are shared, never changed after they are made (the bridge only writes
    them out as JSON)."""

    def __init__(self, size: int = 8) -> None:
        self.size = size
        self._results: OrderedDict[tuple[str, str], Any] = OrderedDict()

    def get(self, case: Any, asked: str, compute: Callable[[], Any]) -> Any:
        """The result for (``case``, ``asked``): remembered, or ``compute()``d and kept."""
        key = (json.dumps(case, sort_keys=True, separators=(",", ":"), allow_nan=False),
               asked)
        if key in self._results:
            self._results.move_to_end(key)
            return self._results[key]
        result = compute()
        self._results[key] = result
        if len(self._results) > self.size:
            self._results.popitem(last=False)
        return result

    def clear(self) -> None:
        self._results.clear()


CACHE = ResultCache()
"""The bridge's results of the last few inputs (a worker serves one page)."""


def _evaluate(payload: Any) -> dict[str, Any]:
    result: dict[str, Any] = CACHE.get(payload, ",".join(SECTIONS),
                                       lambda: evaluate(read_case(payload, plain=True)))
    return result


def _evaluate_live(payload: Any) -> dict[str, Any]:
    """``{"case", "sections"?}`` -> the evaluate result with only those sections (default
    the answer band's, ``LIVE_SECTIONS``), in pipeline order."""
    obj = as_object(payload, "", "a live request")
    only_keys(obj, "", ("case", "sections"))
    case = _field(obj, "case")
    sections = obj.get("sections", list(LIVE_SECTIONS))
    if not isinstance(sections, list) or not all(isinstance(name, str) for name in sections):
        raise CaseError("sections", "sections must be a list of section names, such as "
                                    f"{', '.join(LIVE_SECTIONS)}.")
    unknown = sorted(set(sections) - set(SECTIONS))
    if unknown:
        raise CaseError("sections", f"Unknown result sections: {', '.join(unknown)}; "
                                    f"known: {', '.join(SECTIONS)}.")
    wanted = tuple(name for name in SECTIONS if name in sections)
    result: dict[str, Any] = CACHE.get(case, ",".join(wanted),
                                       lambda: evaluate(read_case(case, plain=True), wanted))
    return result


def _open_remedy(payload: Any) -> dict[str, Any]:
    """``{"case", "remedy"}`` -> ``{"remedy": the entry}``, its figures from its finished
    case (what the page shows when that remedy is opened)."""
    obj = as_object(payload, "", "a remedy request")
    only_keys(obj, "", ("case", "remedy"))
    case, remedy = _field(obj, "case"), _field(obj, "remedy")
    result: dict[str, Any] = CACHE.get(
        case, f"remedy:{remedy}", lambda: {"remedy": opened_remedy(read_case(case, plain=True),
                                                               remedy)})
    return result


def _summary(payload: Any) -> dict[str, Any]:
    from pycore.documents.summary import text_summary

    return {"text": text_summary(evaluate(read_case(payload)))}


def _describe_prescription(payload: Any) -> dict[str, Any]:
    """A prescription line (``text``; optional ``eye``, needed for prism in 360-degree
    notation) read and written back the trade's way."""
    text = _field(payload, "text")
    eye = _optional_eye(payload)
    line = parse_written(text, "text", eye)
    rx = line.prescription
    prism: dict[str, Any] | None = None
    if line.prism is not None:
        prism = dict(line.prism.as_dict(eye or "right"))
        if eye is None:  # the 360-degree direction depends on the eye
            prism.update(direction_360=None, in_360_words=None)
        prism["written"] = written_prism(line.prism)
    return {"sphere": rx.sphere, "cylinder": rx.cylinder, "axis": rx.axis,
            "add": line.add, "prism": prism,
            "written": rx.written(), "written_line": line.written(),
            "written_parts": {
                "sphere": written_sphere(rx.sphere),
                "cylinder": written_dioptres(rx.cylinder) if rx.cylinder else None,
                "axis": written_axis(rx.axis) if rx.cylinder else None,
                "add": written_dioptres(line.add) if line.add is not None else None,
                "prism": prism["written"] if prism is not None else None},
            "transposed_written": rx.transposed().written(),
            "horizontal_power": rx.horizontal_power, "vertical_power": rx.vertical_power}


def _describe_sphere(payload: Any) -> dict[str, Any]:
    """The separate sphere field (``text``: ``+2.00``, ``2.00 DS``, ``pl``, ``plano``)."""
    sphere = parse_sphere(_field(payload, "text"), "text")
    return {"sphere": sphere, "written": written_sphere(sphere)}


def _optional_eye(payload: Any) -> Eye | None:
    eye = payload.get("eye") if isinstance(payload, dict) else None
    if eye is None:
        return None
    if eye not in EYES:
        raise CaseError("eye", "eye must be right or left.", eye)
    return "right" if eye == "right" else "left"


def _field(payload: Any, key: str) -> Any:
    if not isinstance(payload, dict) or key not in payload:
        raise CaseError(key, f"{key} is missing from the request.")
    return payload[key]


Action = Callable[[Any], Any]

ACTIONS: dict[str, Action] = {
    "version": _version,
    "evaluate": _evaluate,
    "evaluate_live": _evaluate_live,
    "open_remedy": _open_remedy,
    "summary_text": _summary,
    "describe_prescription": _describe_prescription,
    "describe_sphere": _describe_sphere,
    "reading_zone": actions.reading_zone,
    "apply_remedy": actions.apply_remedy,
    "verify": actions.verify,
    "verify_standards": actions.verify_standards,
    "readers_limit_sets": actions.readers_limit_sets,
    "readers_rank": actions.readers_rank,
    "readers_stock_import": actions.stock_import,
    "readers_stock_export": actions.stock_export,
    "readers_hand_out": actions.hand_out,
    "readers_undo": actions.undo,
    "deviation": actions.deviation,
    "batch": actions.batch,
    "read_document": actions.read_document,
}
"""Every action the page can ask for, by name (the only way the page reaches the core)."""


def _read_request(request_json: str) -> Any:
    """The request parsed by the one JSON reader; refusals name the payload's own fields."""
    try:
        return load_json(request_json, "the request", MAX_NESTING + 1)
    except CaseError as exc:
        if "levels deep" in exc.message:
            raise CaseError("", f"The document is nested more than {MAX_NESTING} levels "
                                "deep.") from None
        if exc.field.startswith("payload."):
            field = exc.field.removeprefix("payload.")
            raise CaseError(field, exc.message.replace(exc.field, field, 1), exc.value) \
                from None
        raise


def handle(request_json: str) -> str:
    """Answer one request (JSON text) with one reply (JSON text); never raises."""
    try:
        if len(request_json) > 2 * MAX_DOCUMENT_BYTES:
            raise CaseError("", "The request is too large.")
        request = _read_request(request_json)
        if not isinstance(request, dict) or not isinstance(request.get("action"), str):
            raise CaseError("action", "The request must name an action.")
        name = request["action"]
        if name not in ACTIONS:
            raise CaseError("action", f"Unknown action {name!r}; known: "
                                      f"{', '.join(sorted(ACTIONS))}.", name)
        reply: dict[str, Any] = {"ok": True, "result": ACTIONS[name](request.get("payload"))}
    except CaseError as exc:
        reply = {"ok": False, "error": exc.as_dict()}
    except Exception as exc:  # a fault of the core: report it, never crash the worker
        reply = {"ok": False, "error": {
            "field": "",
            "message": f"Internal error in the calculation core ({type(exc).__name__}); "
                       "your input is kept. Please report this case.",
            "detail": traceback.format_exc(limit=3)}}
    return json.dumps(reply, allow_nan=False)
