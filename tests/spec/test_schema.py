"""The spec schema: valid JSON Schema 2020-12, help on every property, examples that pass,
one source of truth shipped with the package, and the bundled examples valid under it."""

from __future__ import annotations

import json
from pathlib import Path
from typing import Any

import pytest
from jsonschema import Draft202012Validator

from compiler.errors import SchemaError
from compiler.spec import load_spec
from compiler.spec.validate import SPEC_SCHEMA, read_schema

ROOT = Path(__file__).resolve().parents[2]
SCHEMA_FILE = ROOT / "schemas" / SPEC_SCHEMA


def _walk(node: Any, path: str = "#") -> list[tuple[str, dict[str, Any]]]:
    found = []
    if isinstance(node, dict):
        for name, sub in node.get("properties", {}).items():
            if isinstance(sub, dict):
                found.append((f"{path}/properties/{name}", sub))
        for key, value in node.items():
            if key not in ("allOf",):
                found += _walk(value, f"{path}/{key}")
    elif isinstance(node, list):
        for i, value in enumerate(node):
            found += _walk(value, f"{path}/{i}")
    return found


def test_schema_is_valid_2020_12_with_id() -> None:
    schema = json.loads(SCHEMA_FILE.read_text())
    Draft202012Validator.check_schema(schema)
    assert schema["$schema"] == "https://json-schema.org/draft/2020-12/schema"
    assert schema["$id"].endswith(SPEC_SCHEMA)
    assert schema["additionalProperties"] is False


def test_every_property_has_a_description() -> None:
    missing = [path for path, sub in _walk(json.loads(SCHEMA_FILE.read_text()))
               if "description" not in sub and "$ref" not in sub]
    assert missing == []


def test_every_object_rejects_unknown_keys() -> None:
    schema = json.loads(SCHEMA_FILE.read_text())
    loose = [path for path, sub in _walk(schema)
             if sub.get("type") == "object" and "properties" in sub
             and sub.get("additionalProperties") is not False]
    assert loose == []


def test_loaded_schema_is_the_checked_in_file() -> None:
    # One source of truth: what the program validates with is schemas/ verbatim.
    assert read_schema(SPEC_SCHEMA) == json.loads(SCHEMA_FILE.read_text())


@pytest.mark.parametrize("path", sorted((ROOT / "specs_examples").glob("*.yaml")),
                         ids=lambda p: p.stem)
def test_examples_are_valid_and_carry_the_modeline(path: Path) -> None:
    text = path.read_text()
    assert text.startswith("# yaml-language-server: $schema=../schemas/" + SPEC_SCHEMA)
    load_spec(text, str(path))


def test_a_yaml_boolean_among_choices_is_one_problem_with_the_choices() -> None:
    # YAML 1.1 (yaml.org/type/bool) reads an unquoted `off` as false: the value breaks both the
    # type (text) and the list of choices; the maker gets one problem, which lists them.
    text = ("boresmith: 1\ninstrument: Switched off\ntuning: {temperament: off}\n"
            "stock:\n  t: {material: brass, tube: {inside_diameter: 20 mm, wall: 1 mm}}\n"
            "tube_sets:\n  - {id: s, family: open-tube, stock: t, notes: [A4], losses: no}\n")
    with pytest.raises(SchemaError) as err:
        load_spec(text, "off.yaml")
    problems = [(p.position.line, p.message, p.hint) for p in err.value.problems]
    assert [(line, message) for line, message, _ in problems] == [
        (3, "tuning.temperament: `false` is not one of the choices"),
        (7, "tube_sets[0].losses: `false` is not one of the choices")]
    assert all("`equal`" in hint or "`keefe`" in hint for _, _, hint in problems)
