"""Prescriptions typed the way they are written, as a person types them.

Each written form goes into the app key by key. The app sends the text to the
core exactly as typed; the page must then agree with `python -m pycore evaluate`
on the same case: where the core reads the form, the page shows the core's
prescription and transposed form; where it refuses it, the field is marked with
the core's sentence in words (never an internal key such as "right.rx"). Also:
what was typed stays as typed after a reload; figures the app writes into the
fields are written the trade's way; several bad fields are marked at once; the
browser's Back undoes an Apply.
"""

from __future__ import annotations

import json
import re
import subprocess
import sys
from collections.abc import Iterator
from typing import Any

import pytest
from conftest import Watch
from e2e_support import ROOT, address_case, case_fragment, result_seq, wait_result

BIFOCAL = json.loads((ROOT / "examples" / "boat-builder-bifocal.json").read_text())
INTERNAL_KEY = re.compile(r"\b(right|left|fitting|reading_zone)\.[a-z_]+|\b[a-z]+_mm\b")

# (field, text): written forms of the trade (common practice): plano as pl / plano,
# DS for a sphere alone, the axis after x, the multiplication sign or *, an add and
# a prism on the line.
WRITTEN = [
    ("#right-rx", "+2.00 / -0.75 x 180"),
    ("#right-rx", "-1.25/-0.50\u00d790"),
    ("#right-rx", "-1.25 -0.50 * 90"),
    ("#right-rx", "pl / -0.50 x 90"),
    ("#right-rx", "plano"),
    ("#right-rx", "+1.50 DS add +2.50"),
    ("#right-rx", "-2.00 / -1.00 x 10 1.5 BU"),
    ("#right-sphere", "pl"),
    ("#right-sphere", "plano"),
    ("#right-sphere", "+2.00 DS"),
]


def cli(doc: dict[str, Any]) -> tuple[int, dict[str, Any] | None, str]:
    proc = subprocess.run([sys.executable, "-m", "pycore", "evaluate", "-"],
                          input=json.dumps(doc).encode(), capture_output=True, cwd=ROOT,
                          timeout=60, check=False)
    out = json.loads(proc.stdout) if proc.returncode == 0 else None
    return proc.returncode, out, proc.stderr.decode().strip()


def settled(page: Any) -> None:
    page.wait_for_function("""() =>
        document.querySelector('#answer-band').dataset.pending === 'false'
        && document.querySelector('#results').dataset.status !== 'pending'""")


def retype(page: Any, selector: str, text: str) -> None:
    page.click(selector)
    page.keyboard.press("Control+A")
    page.keyboard.press("Backspace")
    page.keyboard.type(text, delay=10)


@pytest.fixture(scope="module")
def shared(browser: Any, site: Any) -> Iterator[tuple[Any, Watch]]:
    watch = Watch()
    ctx = browser.new_context(viewport={"width": 360, "height": 740}, has_touch=True)
    ctx.set_default_timeout(60_000)
    watch.attach(ctx)
    page = ctx.new_page()
    page.goto(site.url)
    wait_result(page, status="error")
    yield page, watch
    ctx.close()


@pytest.fixture
def tpage(shared: tuple[Any, Watch]) -> Iterator[Any]:
    page, watch = shared
    before = len(watch.errors)
    yield page
    assert not watch.errors[before:], watch.errors[before:]


@pytest.mark.parametrize("field,text", WRITTEN, ids=[f"{f[1:]}:{t}" for f, t in WRITTEN])
def test_written_form_typed(tpage, field, text):
    page = tpage
    start = [("#right-rx", ""), ("#right-sphere", "+1.00"), ("#left-sphere", "+1.00"),
             ("#right-pd", "32"), ("#left-pd", "31")]
    for selector, value in start:
        if page.input_value(selector) != value:
            retype(page, selector, value)
    retype(page, field, text)
    settled(page)
    doc = address_case(page)
    key = field[1:].replace("-", ".", 1)                  # "#right-rx" -> "right.rx"
    eye, part = key.split(".")
    assert doc[eye][part] == text                        # sent exactly as typed
    assert page.input_value(field) == text               # and still shown as typed
    code, expected, message = cli(doc)
    if code == 0:
        assert page.get_attribute("#results", "data-status") == "current"
        shown = page.locator(f"#{eye}-transposed [data-key='eyes.{eye}.transposed_written']")
        assert shown.text_content() == expected["eyes"][eye]["transposed_written"]
        assert page.get_attribute(field, "aria-invalid") is None
    else:
        assert code == 2 and message
        assert page.get_attribute(f"#{eye}-sphere" if part == "sphere" else field,
                                  "aria-invalid") == "true"
        note = page.text_content(f"{field}-error")
        tail = message.split(" ", 1)[1]                  # the sentence after the field's path
        assert tail.split(";")[0].split("(")[0].strip() in note
        assert not INTERNAL_KEY.search(note), note
        assert_named_once(note)
        assert not INTERNAL_KEY.search(page.text_content("#result-status"))
        # A field that no longer reads has no transposed form beside it.
        assert page.text_content(f"#{eye}-transposed") == ""
    retype(page, field, "")
    settled(page)


def assert_named_once(note: str) -> None:
    """A field's note names the field once ("Left sphere: could not read ..."),
    never "Left sphere: Left sphere ..." nor "Left sphere: left.sphere ..."."""
    name, _, sentence = note.partition(": ")
    assert name and sentence, note
    assert not sentence.lower().startswith(name.lower()), note


def test_several_bad_fields_marked_at_once(tpage):
    page = tpage
    for selector, value in (("#right-rx", ""), ("#left-sphere", "+1.00"), ("#right-pd", "32")):
        if page.input_value(selector) != value:
            retype(page, selector, value)
    retype(page, "#right-sphere", "+1.00")
    retype(page, "#right-axis", "400")
    retype(page, "#left-pd", "abc")
    settled(page)
    page.wait_for_selector("#right-axis-error")
    page.wait_for_selector("#left-pd-error")
    for selector in ("#right-axis", "#left-pd"):
        assert page.get_attribute(selector, "aria-invalid") == "true"
    axis, pd = page.text_content("#right-axis-error"), page.text_content("#left-pd-error")
    assert "Right axis" in axis and "Left monocular PD" in pd and axis != pd
    for text in (axis, pd):
        assert not INTERNAL_KEY.search(text), text
        assert_named_once(text)
    retype(page, "#right-axis", "")
    retype(page, "#left-pd", "31")
    settled(page)
    assert page.locator("[aria-invalid='true']").count() == 0


def test_typed_text_survives_a_reload_and_written_back_the_trades_way(tpage):
    page = tpage
    retype(page, "#right-sphere", "1.5")
    retype(page, "#left-cylinder", "-.25")
    settled(page)
    page.reload()
    settled(page)
    assert page.input_value("#right-sphere") == "1.5"     # as typed, not "+1.50"
    assert page.input_value("#left-cylinder") == "-.25"
    # A case opened from elsewhere: its dioptres are written the trade's way.
    seq = result_seq(page)
    page.evaluate("(h) => { location.hash = h; }", case_fragment(
        {"right": {"sphere": 1, "cylinder": -0.5, "axis": 90, "add": 2},
         "left": {"sphere": 0, "add": 2},
         "fitting": {"right": {"mono_pd_mm": 32}, "left": {"mono_pd_mm": 31}}}))
    wait_result(page, after=seq)
    assert [page.input_value(s) for s in ("#right-sphere", "#right-cylinder", "#right-add",
                                          "#left-sphere")] == ["+1.00", "-0.50", "+2.00", "0.00"]


def test_back_returns_to_the_case_before_an_apply(tpage):
    page = tpage
    seq = result_seq(page)
    page.evaluate("(h) => { location.hash = h; }", case_fragment(BIFOCAL))
    wait_result(page, after=seq)
    held = address_case(page)
    seq = result_seq(page)
    page.click("#answer-band .band-apply")
    wait_result(page, after=seq)
    assert address_case(page) != held
    seq = result_seq(page)
    page.go_back()
    wait_result(page, after=seq)
    assert address_case(page) == held
