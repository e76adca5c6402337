"""The browser worker's door into the core: named actions, JSON in and out.

``handle('{"action": "evaluate", "payload": {...}}')`` returns
``{"ok": true, "result": ...}`` or ``{"ok": false, "error": {"field", "message"}}``.
The protocol is documented in docs/worker-protocol.md.
"""

from __future__ import annotations

import json
import traceback
from collections.abc import Callable
from typing import Any

from . import __version__
from .cases import MAX_DOCUMENT_BYTES, load_json, read_case
from .errors import CaseError
from .evaluate import evaluate
from .eyes import EYES, Eye
from .notation import parse_prism, parse_sphere, parse_written, written_prism
from .power import written_axis, written_dioptres, written_sphere
from .summary import text_summary

Action = Callable[[Any], Any]
ACTIONS: dict[str, Action] = {}


def action(name: str) -> Callable[[Action], Action]:
    """Register a named action (the only way the page can reach the core)."""

    def register(function: Action) -> Action:
        ACTIONS[name] = function
        return function

    return register


@action("version")
def _version(_payload: Any) -> dict[str, Any]:
    return {"version": __version__, "actions": sorted(ACTIONS)}


@action("evaluate")
def _evaluate(payload: Any) -> dict[str, Any]:
    return evaluate(read_case(payload))


@action("summary_text")
def _summary(payload: Any) -> dict[str, Any]:
    return {"text": text_summary(evaluate(read_case(payload)))}


@action("describe_prescription")
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


@action("describe_sphere")
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


@action("describe_prism")
def _describe_prism(payload: Any) -> dict[str, Any]:
    text = _field(payload, "text")
    eye = _field(payload, "eye")
    if eye not in EYES:
        raise CaseError("eye", "eye must be right or left.", eye)
    chosen: Eye = "right" if eye == "right" else "left"
    return parse_prism(text, chosen, "text").as_dict(chosen)


def _field(payload: Any, key: str) -> Any:
    if not isinstance(payload, dict) or key not in payload:
        raise CaseError(key, f"{key} is missing from the request.")
    return payload[key]


def handle(request_json: str) -> str:
    """Answer one request (JSON text) with one reply (JSON text); never raises."""
    from . import extensions  # noqa: F401  (registers further actions)

    try:
        if len(request_json) > 2 * MAX_DOCUMENT_BYTES:
            raise CaseError("", "The request is too large.")
        request = load_json(request_json)
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
