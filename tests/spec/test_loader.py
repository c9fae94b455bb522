"""YAML loading with positions, duplicate keys and limits."""

from __future__ import annotations

import pytest

from compiler.errors import YamlError
from compiler.spec.loader import MAX_DEPTH, load_document


def test_positions_of_keys_and_values() -> None:
    doc = load_document("a: 1\nb:\n  - x: 2\n    y: [3, 4]\n", "f.yaml")
    assert doc.data == {"a": 1, "b": [{"x": 2, "y": [3, 4]}]}
    assert (doc.at(("a",)).line, doc.at(("a",)).col) == (1, 4)
    assert (doc.key_at(("b", 0, "y")).line, doc.key_at(("b", 0, "y")).col) == (4, 5)
    assert (doc.at(("b", 0, "y", 1)).line, doc.at(("b", 0, "y", 1)).col) == (4, 12)
    # a path that does not exist falls back to its nearest parent
    assert doc.at(("b", 0, "zzz")) == doc.at(("b", 0))


def test_yaml_1_1_words_stay_keys() -> None:
    # `on`/`no` are booleans in YAML 1.1 values, but keys must stay the words written.
    doc = load_document("on: 1\nno: 2\n", "f.yaml")
    assert set(doc.data) == {"on", "no"}


def test_dates_are_kept_as_text() -> None:
    assert load_document("a: 2024-01-01\n", "f.yaml").data == {"a": "2024-01-01"}


def test_duplicate_key_names_both_lines() -> None:
    # Reported, and the reading goes on (with the first value) to find the other problems.
    doc = load_document("x: 1\ny:\n  z: 1\n  z: 2\n", "f.yaml")
    [problem] = doc.problems
    assert (problem.position.line, problem.position.col) == (4, 3)
    assert "first given at line 3" in problem.message and problem.category == "yaml"
    assert doc.data == {"x": 1, "y": {"z": 1}}


def test_aliases_are_expanded() -> None:
    doc = load_document("a: &v {t: 20 C}\nb: *v\n", "f.yaml")
    assert doc.data["b"] == {"t": "20 C"}


def test_depth_limit() -> None:
    text = "a: " + "[" * (MAX_DEPTH + 5) + "]" * (MAX_DEPTH + 5) + "\n"
    with pytest.raises(YamlError, match="nested more than"):
        load_document(text, "f.yaml")


def test_not_utf8() -> None:
    with pytest.raises(YamlError, match="not UTF-8"):
        load_document(b"a: \xff\xfe\n", "f.yaml")


def test_sha256_of_text() -> None:
    # sha256("a: 1\n"), computed with hashlib (FIPS 180-4) independently of the loader
    import hashlib

    assert load_document("a: 1\n").sha256 == hashlib.sha256(b"a: 1\n").hexdigest()
