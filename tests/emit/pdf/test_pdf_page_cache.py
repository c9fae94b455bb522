"""Page bodies whose inputs did not change are replayed from the cache, not redrawn, and
the document comes out byte for byte as a cold render."""

from __future__ import annotations

from pathlib import Path

from compiler.build import Compiled, compile_text
from compiler.cache import Cache
from compiler.emit.pdf import BuildSheet, page_key, plan, render
from compiler.emit.pdf.style import frame_for
from compiler.options import Overrides

EXAMPLES = Path(__file__).resolve().parents[3] / "specs_examples"


def test_unchanged_pages_are_replayed_with_the_same_bytes(tmp_path: Path) -> None:
    spec = EXAMPLES / "stopped-wood-gedackt.yaml"
    text = spec.read_text()
    before = compile_text(text, str(spec), Overrides())
    store = Cache(tmp_path)
    warm_first = render(before.resolved, before.parts, before.options, store)
    assert warm_first == render(before.resolved, before.parts, before.options)
    recorded = {p.name for p in tmp_path.iterdir() if p.name.startswith("pdf-page-")}
    assert recorded

    # One pipe's stopper travel changes: only the pages that show it are drawn again.
    after = compile_text(text.replace("stopper: {travel: 25 mm}", "stopper: {travel: 30 mm}"),
                         str(spec), Overrides())
    store = Cache(tmp_path)
    warm = render(after.resolved, after.parts, after.options, store)
    assert warm == render(after.resolved, after.parts, after.options)
    now = {p.name for p in tmp_path.iterdir() if p.name.startswith("pdf-page-")}
    reused = store.used & recorded
    drawn_again = now - recorded
    assert reused, "no page body was reused"
    assert drawn_again, "a changed page was not drawn again"
    # exactly the bodies whose inputs are the same as before come from the cache
    frame = frame_for("a4")

    def keys(compiled: Compiled) -> set[str]:
        sheet = BuildSheet.of(compiled.resolved, compiled.parts, compiled.options)
        return {"pdf-page-" + page_key(frame, page) for page in plan(sheet)}

    assert reused == keys(before) & keys(after)
