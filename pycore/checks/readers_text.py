"""The readable forms of the readers ranking and the deviation through spectacles."""

from __future__ import annotations

from typing import Any


def readers_text(result: dict[str, Any]) -> str:
    limits = result["limits"]
    wearer = result["wearer"]
    lines = ["Prism Desk - ready-made readers", "",
             f"Limits: {limits['title']} ({limits['standard']})",
             f"  source ({limits['certainty']}): {limits['source']}",
             f"Wearer: needs about {wearer['target_power_d']:+.2f} D; eyes differ by "
             f"{wearer['anisometropia_d']:.2f} D; largest cylinder "
             f"{wearer['largest_cylinder_d']:.2f} D; near CD {wearer['near_cd_mm']:.1f} mm "
             f"({wearer['near_cd_from']})", ""]
    if result["ready_made_suits"]:
        lines.append("Pairs that suit, best first:")
        for entry in result["ranked"]:
            lines.append(f"  {entry['rank']}. {_pair_line(entry)}")
    else:
        lines.append("No ready-made pair suits: custom spectacles are needed.")
        lines.extend(f"  - {reason['message']}" for reason in result["reasons"])
    others = [e for e in result["pairs"] if not e["suitable"]]
    if others:
        lines.append("")
        lines.append("Other pairs:")
        for entry in others:
            lines.append(f"  {_pair_line(entry)}")
            lines.append(f"      not suitable: {'; '.join(entry['why_not']) or 'wearer'}")
    lines.append("")
    lines.extend(f"  note: {note}" for note in result["notes"])
    lines.extend(f"! {caution}" for caution in result["cautions"])
    return "\n".join(lines) + "\n"


def _pair_line(entry: dict[str, Any]) -> str:
    frame = f", frame {entry['frame_size']}" if entry["frame_size"] else ""
    return (f"{entry['id']}: {entry['power']:+.2f} D, OCs {entry['oc_distance_mm']:g} mm"
            f"{frame}, {entry['count']} on hand - R {entry['prism']['right']['in_words']}, "
            f"L {entry['prism']['left']['in_words']}; {entry['net']['horizontal_in_words']}")


def deviation_text(result: dict[str, Any]) -> str:
    lines = ["Prism Desk - deviation measured through spectacles", "",
             f"Measured (prisms before the {result['deviating']} eye, the "
             f"{result['fixating']} fixating): {result['measured']['in_words']}",
             f"At the eye: {result['at_eye']['in_words']}, the eye's rotation behind the "
             f"lens (lens to centre of rotation {result['centre_of_rotation_mm']:g} mm)",
             f"Left uncorrected by the spectacles (at the eye): "
             f"{result['uncorrected']['in_words']}", ""]
    lines.extend(result["explanation"])
    for meridian in result["meridians"].values():
        if abs(meridian["measured"]) >= 0.005:
            lines.append(meridian["why"])
    if result["oblique_cylinder"]:
        lines.append("The lens has an oblique cylinder: each direction of deviation also "
                     "changes the other a little (worked out with the power matrix).")
    spectacle = result["spectacle_prism"]
    lines.append("")
    lines.append("Prism the spectacles themselves put before the eyes at the points used:")
    for eye in ("right", "left"):
        point = spectacle["points"][eye]
        lines.append(f"  {eye:5} ({point['in_mm']:g} in, {point['up_mm']:g} up): "
                     f"{spectacle[eye]['in_words']}")
    lines.append(f"  net   {spectacle['net']['vertical_in_words']}; "
                 f"{spectacle['net']['horizontal_in_words']}")
    lines.append("")
    lines.extend(f"! {caution}" for caution in result["cautions"])
    return "\n".join(lines) + "\n"
