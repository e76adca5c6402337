"""The readable form of a verification result (``verify --text`` and print)."""

from __future__ import annotations

from typing import Any

_MARK = {"pass": "PASS", "fail": "FAIL", "not_judged": "NOT JUDGED",
         "not_defined": "NOT DEFINED"}


def verification_lines(result: dict[str, Any]) -> list[str]:
    """Lines describing a verification result, verdict first."""
    standard = result["standard"]
    overall = {"pass": "PASS", "fail": "FAIL", "incomplete": "INCOMPLETE"}[result["result"]]
    title = f"Verification against {standard['short']}: {overall}"
    if result["unverified"]:
        title += " (UNVERIFIED: tolerance values from memory)"
    lines = [title, f"  {result['lens_type'].replace('_', ' ')}, {result['mounting']}"]
    worst = result.get("worst")
    if worst is not None:
        decider = result["verdicts"][worst]
        lines.append(f"  deciding criterion: {decider['label']} "
                     f"({_MARK[decider['status']].lower()})")
    for verdict in result["verdicts"]:
        lines.append("")
        lines.append(f"  {verdict['label']}: {_MARK[verdict['status']]}")
        if verdict["status"] == "not_judged":
            lines.append(f"    {verdict['missing']}")
        elif verdict["status"] == "not_defined":
            lines.append(f"    {verdict['in_words']}")
        else:
            lines.append(f"    {verdict['what']}: {_number(verdict)} (limit "
                         f"{verdict['limit']:g} {verdict['unit']}, margin "
                         f"{_signed(verdict['margin'])})")
            lines.append(f"    {verdict['in_words']}")
            if "wearer" in verdict:
                lines.append(f"    for the wearer: {verdict['wearer']['in_words']}")
        reading = verdict.get("reading")
        if reading:
            other = "per_eye" if reading == "total" else "total"
            lines.append(f"    reading used: {reading.replace('_', ' ')}")
            if other in verdict.get("readings", {}):
                alt = verdict["readings"][other]
                lines.append(f"    {other.replace('_', ' ')} reading: {alt['value']:.2f} "
                             f"against {alt['limit']:g}: {'pass' if alt['pass'] else 'fail'}")
        if "applied" in verdict:
            lines.append(f"    {verdict['applied']}")
        lines.append(f"    rule: {verdict['rule']}")
        lines.append(f"    source ({verdict['certainty']}): {verdict['source']}")
    lines.append("")
    for eye, info in result["eyes"].items():
        lines.append(f"  {eye:5}  unwanted {info['unwanted_prism']['in_words']} at the "
                     f"specified point; reference point "
                     f"{_offset_words(info['prp_from_specified_mm'])}")
    if "net_unwanted" in result:
        net = result["net_unwanted"]
        lines.append(f"  net    {net['vertical_in_words']}; {net['horizontal_in_words']}")
    if result.get("not_checked"):
        lines.append("")
        lines.extend(f"  not checked: {note}" for note in result["not_checked"])
    if result["assumptions"]:
        lines.append("")
        lines.extend(f"  assumed: {note}" for note in result["assumptions"])
    return lines


def verification_text(result: dict[str, Any]) -> str:
    lines = ["Prism Desk - verification of finished spectacles", "",
             *verification_lines(result), ""]
    lines.extend(f"! {caution}" for caution in result["cautions"])
    return "\n".join(lines) + "\n"


def _signed(value: float) -> str:
    text = f"{value:+.2f}"
    return "0.00" if text in ("+0.00", "-0.00") else text


def _number(verdict: dict[str, Any]) -> str:
    digits = 1 if verdict["unit"] == "mm" else 2
    return f"{verdict['value']:.{digits}f} {verdict['unit']}"


def _offset_words(offset: dict[str, float]) -> str:
    parts = []
    if abs(offset["in_mm"]) >= 0.05:
        parts.append(f"{abs(offset['in_mm']):.1f} mm {'in' if offset['in_mm'] > 0 else 'out'}")
    if abs(offset["up_mm"]) >= 0.05:
        parts.append(f"{abs(offset['up_mm']):.1f} mm {'up' if offset['up_mm'] > 0 else 'down'}")
    return ", ".join(parts) + " from where it was specified" if parts else "where specified"
