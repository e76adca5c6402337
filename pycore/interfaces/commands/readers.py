"""``python -m pycore readers FILE``: rank a clinic's ready-made readers for one wearer."""

from __future__ import annotations

import argparse
import json

from pycore.checks.reader_limits import limit_sets
from pycore.checks.reader_stock import StockPair, read_stock, stock_from_csv
from pycore.checks.readers import readers_request
from pycore.checks.readers_text import readers_text
from pycore.documents.cases import load_json
from pycore.documents.kinds import refuse_other_kind
from pycore.errors import CaseError, shown
from pycore.interfaces.commands.common import read_input, write_output

HELP = "rank ready-made readers from a clinic's stock for one wearer"

DESCRIPTION = """\
Ready-made readers at an outreach clinic. FILE (JSON, or - for standard input)
describes the wearer: the near powers of each eye (rx, or sphere/cylinder/
axis), and the PD: distance_pd_mm (with working_distance_mm, default 400 mm
from the lenses), mono_pd_mm for each eye, or near_pd_mm measured at near.
The stock comes from the file's "stock" list or from --stock (CSV with the
columns id, power, oc_distance_mm, frame_size, count; or a JSON list).

For every stock pair the tool works out the prism it puts before each eye at
the wearer's near visual points (Prentice's rule: plus readers with optical
centres wider than the near CD give base out) and ranks the pairs of a
suitable power that keep within the chosen limits: ISO 16034 or the limits
proposed for low-resource settings (Optom Vis Sci 2007). It says when no
ready-made pair suits (eyes too different, astigmatism, too much prism) and
custom spectacles are needed. A screening aid: a full eye examination and
licensed practice come first; follow local rules.
"""


def add_arguments(parser: argparse.ArgumentParser) -> None:
    parser.formatter_class = argparse.RawDescriptionHelpFormatter
    parser.description = DESCRIPTION
    parser.add_argument("file", metavar="FILE", nargs="?",
                        help="the wearer (JSON), or - for standard input")
    parser.add_argument("--stock", metavar="STOCK",
                        help="stock file: CSV (.csv) or a JSON list (.json)")
    parser.add_argument("--limits", metavar="ID",
                        help="limit set: iso-16034-2002 (default) or low-resource-2007")
    parser.add_argument("--list-limits", action="store_true",
                        help="list the limit sets with their sources and exit")
    parser.add_argument("--text", action="store_true",
                        help="write a readable list instead of JSON")


def run(args: argparse.Namespace) -> int:
    if args.list_limits:
        sets = [limits.as_dict() for limits in limit_sets().values()]
        if args.text:
            text = "".join(f"{s['id']}: {s['title']}\n    source ({s['certainty']}): "
                           f"{s['source']}\n" for s in sets)
        else:
            text = json.dumps({"limit_sets": sets}, indent=2) + "\n"
        write_output(text)
        return 0
    if args.file is None:
        raise CaseError("FILE", "FILE is missing: give the wearer file, or - for standard "
                                "input.")
    document = load_json(read_input(args.file, "the readers file"), "the readers file")
    refuse_other_kind(document, ("readers",))
    stock = None
    if args.stock is not None:
        stock = _stock(args.stock)
        if isinstance(document, dict) and "stock" in document:
            raise CaseError("stock", "stock is given both in FILE and with --stock; give it "
                                     "once.")
    if args.limits is not None and isinstance(document, dict):
        document["limits"] = args.limits
    result = readers_request(document, stock)
    write_output(readers_text(result) if args.text else json.dumps(result, indent=2) + "\n")
    return 0


def _stock(source: str) -> tuple[StockPair, ...]:
    data = read_input(source, "the stock file")
    if source.lower().endswith(".json"):
        return read_stock(load_json(data, "the stock file"))
    try:
        text = data.decode("utf-8")
    except UnicodeDecodeError as exc:
        line = data[:exc.start].count(b"\n") + 1
        raise CaseError("stock", f"The stock file {shown(source)} is not UTF-8 text (a bad "
                                 f"byte on line {line}).") from None
    return stock_from_csv(text)

