"""A readable text summary of an evaluation, for the terminal and for print."""

from __future__ import annotations

from typing import Any

from pycore.optics.eyes import EYES
from pycore.rounding import fixed


def text_summary(result: dict[str, Any]) -> str:
    lines = ["Prism Desk - case summary", ""]
    eyes = result.get("eyes", {})
    for eye in EYES:
        info = eyes.get(eye)
        if not info:
            continue
        line = f"{eye.capitalize():5}  {info['written']}  (transposed {info['transposed_written']})"
        if info.get("add"):
            line += f"  add {info['add']:+.2f}"
        if info["prism"]["amount"] > 0:
            line += f"  prism {info['prism']['in_words']}"
        lines.append(line)
    fitting = result.get("fitting")
    if fitting and fitting.get("near_inset_mm"):
        insets = fitting["near_inset_mm"]
        lines.append(
            f"Near: insets R {insets['right']:.1f} mm, L {insets['left']:.1f} mm; "
            f"near centration distance {fitting['near_centration_distance_mm']:.1f} mm "
            f"at {fitting['working_distance_mm']:g} mm"
        )
    lines.append("")
    for point in result["points"]:
        pos_r, pos_l = point["position"]["right"], point["position"]["left"]
        lines.append(
            f"{point['name']}  (R {pos_r['in_mm']:.1f} in, {pos_r['up_mm']:.1f} up; "
            f"L {pos_l['in_mm']:.1f} in, {pos_l['up_mm']:.1f} up)"
        )
        for eye in EYES:
            prism = point[eye]
            lines.append(f"  {eye:5}  {prism['in_words']}  ({prism['in_360_words']})")
        lines.append(f"  net    {point['net']['vertical_in_words']}")
        induced = point["net"].get("induced_vertical_base_up_right")
        if induced is not None and abs(induced - point["net"]["vertical_base_up_right"]) >= 0.005:
            way = "right" if induced > 0 else "left"
            lines.append("         induced (beyond the prescribed prism): "
                         + (f"{fixed(abs(induced))} base up before the {way} eye"
                            if abs(induced) >= 0.005 else "none"))
        lines.append(f"         {point['net']['horizontal_in_words']}")
    for section in result.values():
        text = section.get("summary_lines") if isinstance(section, dict) else None
        if text:
            lines.append("")
            lines.extend(text)
    lines.append("")
    lines.extend(f"! {caution}" for caution in result.get("cautions", []))
    return "\n".join(lines) + "\n"
