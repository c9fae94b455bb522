"""Page structure and counts of the build sheet, small and large, on both paper sizes."""

from __future__ import annotations

import dataclasses
import io
import math
import time
from collections import Counter
from collections.abc import Callable

from pypdf import PdfReader

from compiler.geometry.model import Parts
from compiler.ir import Resolved


def sections(pages: list[str]) -> list[str]:
    """Each page's section, read from its header (the second line drawn on it)."""
    return [text.splitlines()[1].split(" — ")[0] for text in pages]


def test_small_example_pages(small: tuple[Resolved, Parts], small_pages: list[str]) -> None:
    resolved, _ = small
    count = Counter(sections(small_pages))
    # One cover, one cautions page, two cut-list pages for this handful of parts (notes in
    # full under each size).
    assert (count["Cover"], count["Cautions"], count["Cut list"]) == (1, 1, 2)
    # Groups of up to 12 pipes get a page per pipe: 3 + 1 + 3 + 1; the duct flute also
    # its duct block at full size.
    assert len(resolved.pipes) == 8
    assert count["Pipes"] == len(resolved.pipes) + 1
    # 14 fingerings, the error plot and the admittance plot fit one page.
    assert count["Fingerings"] == 1
    assert sum(count.values()) == len(small_pages)
    # Every page says where it is in the document.
    for number, text in enumerate(small_pages, start=1):
        assert f"page {number} of {len(small_pages)}" in text
    order = list(dict.fromkeys(sections(small_pages)))
    assert order == ["Cover", "Cautions", "Cut list", "Pipes", "Fingerings", "Templates"]


def test_contents_points_at_each_section(small_pages: list[str]) -> None:
    cover = small_pages[0]
    secs = sections(small_pages)
    for title in ("Cautions", "Cut list", "Pipes", "Templates"):
        first = secs.index(title) + 1
        assert f"{title}\n{first}" in cover, title


def test_large_rank_gives_tens_of_pages_not_hundreds(large: tuple[Resolved, Parts],
                                                     large_pages: list[str]) -> None:
    resolved, _ = large
    assert len(resolved.pipes) == 610
    count = Counter(sections(large_pages))
    per_rank = Counter(t.splitlines()[1].split(" — ")[1].split(" (")[0]
                       for t in large_pages if t.splitlines()[1].startswith("Pipes — "))
    # Ten ranks of 61 pipes: each rank's table takes more than one page and at most three.
    assert sorted(per_rank) == [g.id for g in resolved.groups]
    assert all(2 <= n <= 3 for n in per_rank.values()), per_rank
    assert count["Pipes"] == sum(per_rank.values())
    assert 20 <= len(large_pages) <= 110


def test_large_build_is_fast(large: tuple[Resolved, Parts]) -> None:
    from compiler.emit.pdf import render
    from compiler.options import BuildOptions

    start = time.perf_counter()
    render(*large, BuildOptions())
    assert time.perf_counter() - start < 10.0


def test_paper_from_spec_and_from_the_command_line(small: tuple[Resolved, Parts],
                                                   small_pdf: bytes) -> None:
    from compiler.emit.pdf import render
    from compiler.options import BuildOptions

    def size(data: bytes) -> tuple[float, float]:
        box = PdfReader(io.BytesIO(data)).pages[0].mediabox
        return float(box.width), float(box.height)

    # ISO 216: A4 is 210 × 297 mm; ANSI letter is 8.5 × 11 in (72 pt to the inch).
    a4 = (210 / 25.4 * 72, 297 / 25.4 * 72)
    letter = (8.5 * 72, 11 * 72)
    assert all(math.isclose(a, b, abs_tol=0.01) for a, b in zip(size(small_pdf), a4,
                                                                strict=True))
    data = render(*small, BuildOptions(paper="letter"))
    assert all(math.isclose(a, b, abs_tol=0.01) for a, b in zip(size(data), letter,
                                                                strict=True))


def test_letter_pages_keep_every_section(small: tuple[Resolved, Parts],
                                         texts_of: Callable[..., list[str]]) -> None:
    pages = texts_of(*small, "letter")
    assert set(sections(pages)) == {"Cover", "Cautions", "Cut list", "Pipes", "Fingerings",
                                    "Templates"}


def test_no_groups_still_gives_cover_and_cautions(small: tuple[Resolved, Parts],
                                                  texts_of: Callable[..., list[str]]) -> None:
    empty = dataclasses.replace(small[0], groups=(), pipes=(), warnings=())
    pages = texts_of(empty, Parts((), (), ()))
    assert [t.splitlines()[1] for t in pages] == ["Cover", "Cautions", "Cut list"]
