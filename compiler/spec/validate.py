"""Check a loaded document against the spec schema; map every error to its YAML position.

All problems are collected, turned into plain words with a hint, sorted by position and
raised together as one ``SchemaError``.
"""

from __future__ import annotations

import difflib
import json
import re
from functools import lru_cache
from importlib import resources
from pathlib import Path
from typing import Any

from jsonschema import Draft202012Validator, validators
from jsonschema.exceptions import ValidationError

from compiler import FORMAT_VERSION
from compiler.errors import Problem, SchemaError
from compiler.spec.loader import Document

SPEC_SCHEMA = "boresmith-spec.schema.json"


def read_schema(name: str) -> dict[str, Any]:
    """Load a schema shipped with the package (falls back to the checkout's schemas/)."""
    loaded: dict[str, Any] = json.loads(schema_text(name))
    return loaded


@lru_cache(maxsize=4)
def schema_text(name: str) -> str:
    """The text of a schema shipped with the package (or the checkout's schemas/)."""
    packaged = resources.files("compiler").joinpath("schemas", name)
    if packaged.is_file():
        return packaged.read_text(encoding="utf-8")
    checkout = Path(__file__).resolve().parents[2] / "schemas" / name
    return checkout.read_text(encoding="utf-8")


def _ecma_pattern(pattern: str) -> re.Pattern[str]:
    """A JSON Schema ``pattern`` for Python's ``re``: in ECMA-262 (the dialect JSON Schema
    names) an unescaped ``$`` matches only at the very end of the text, while Python's also
    matches before a final newline, which would let `"tubes\\n"` through as an id."""
    return re.compile(re.sub(r"(?<!\\)\$", r"\\Z", pattern))


def _pattern(validator: Any, pattern: str, instance: Any, schema: Any) -> Any:
    if validator.is_type(instance, "string") and not _ecma_pattern(pattern).search(instance):
        yield ValidationError(f"{instance!r} does not match {pattern!r}")


@lru_cache(maxsize=1)
def _validator() -> Draft202012Validator:
    checker = validators.extend(  # type: ignore[no-untyped-call]
        Draft202012Validator, {"pattern": _pattern})
    return checker(read_schema(SPEC_SCHEMA))  # type: ignore[no-any-return]


def dotted(path: tuple[str | int, ...] | list[str | int]) -> str:
    """``('ranks', 0, 'mouth')`` -> ``ranks[0].mouth``."""
    text = ""
    for part in path:
        text += f"[{part}]" if isinstance(part, int) else (f".{part}" if text else str(part))
    return text or "the spec"


def validate_document(document: Document) -> None:
    """Raise ``SchemaError`` with every problem of ``document``, or return quietly."""
    problems, _ = schema_problems(document)
    if problems:
        raise SchemaError(problems)


def schema_problems(document: Document) -> tuple[list[Problem], list[tuple[str | int, ...]]]:
    """Every schema problem of ``document``, and the paths of the values they concern (a
    later stage leaves those out, so it reports only the problems independent of these).

    Raises ``SchemaError`` at once when nothing else can be checked: the spec is not a
    mapping, or is written for another format version.
    """
    data = document.data
    if not isinstance(data, dict):
        raise SchemaError.at(document.at(()), "the spec must be a mapping of keys to values",
                             "start with `boresmith: 1` and `instrument: ...`")
    problems: list[Problem] = []
    if "boresmith" not in data:
        problems.append(Problem(document.at(()), "missing the format version `boresmith: 1`",
                                f"add `boresmith: {FORMAT_VERSION}` as the first line",
                                "schema"))
    else:
        _check_version(document)
    errors = list(_validator().iter_errors(data))
    # A mapping that misses a required key also has too few keys: say only the first.
    missing = {tuple(e.absolute_path) for e in errors if e.validator == "required"}
    # A value outside a list of choices that is not even text (YAML reads an unquoted `off`
    # or `no` as false) breaks both `type` and `enum`: one problem, the one with the choices.
    chosen = {tuple(e.absolute_path) for e in errors if e.validator == "enum"}
    paths: list[tuple[str | int, ...]] = []
    for error in errors:
        path = tuple(error.absolute_path)
        if error.validator == "minProperties" and path in missing:
            continue
        if error.validator == "type" and path in chosen:
            continue
        if error.validator == "required":
            name = error.message.split("'")[1] if "'" in error.message else ""
            if not path and name == "boresmith":
                continue  # said above
            paths.append((*path, name))
        elif error.validator == "additionalProperties" and isinstance(error.instance, dict):
            known = error.schema.get("properties", {}) if isinstance(error.schema, dict) else {}
            paths += [(*path, key) for key in error.instance if key not in known]
        elif path:
            paths.append(path)
        problems.extend(_describe(error, document))
    unique = {(p.position, p.message): p for p in problems}
    return list(unique.values()), paths


def _check_version(document: Document) -> None:
    data = document.data
    version = data["boresmith"]
    where = document.at(("boresmith",))
    if isinstance(version, bool) or not isinstance(version, int):
        raise SchemaError.at(where, f"the format version must be a whole number, not {version!r}",
                             f"write `boresmith: {FORMAT_VERSION}`")
    if version > FORMAT_VERSION:
        raise SchemaError.at(where, f"this spec is written for format version {version}; "
                             f"this boresmith reads up to version {FORMAT_VERSION}",
                             "install a newer boresmith")
    if version < 1:
        raise SchemaError.at(where, f"there is no format version {version}",
                             f"write `boresmith: {FORMAT_VERSION}`")


def _describe(error: ValidationError, document: Document, fallback: str = "") -> list[Problem]:
    path = tuple(error.absolute_path)
    where = document.at(path)
    name = dotted(path)
    schema = error.schema if isinstance(error.schema, dict) else {}
    # A branch of ``oneOf`` often has no description of its own: use its parent's.
    hint = _short(schema.get("description", "")) or fallback
    kind = error.validator
    value = error.instance

    if kind == "additionalProperties" and isinstance(value, dict):
        allowed = sorted(schema.get("properties", {}))
        extra = [k for k in value if k not in schema.get("properties", {})]
        problems = []
        for key in extra:
            close = difflib.get_close_matches(key, allowed, n=1, cutoff=0.6)
            tip = f"did you mean `{close[0]}`? " if close else ""
            tip += "valid keys here: " + ", ".join(f"`{k}`" for k in allowed)
            problems.append(Problem(document.key_at((*path, key)),
                                    f"unknown key `{key}` in {name}", tip, "schema"))
        return problems
    if kind == "required":
        missing = error.message.split("'")[1] if "'" in error.message else "?"
        sub = _dereference(schema.get("properties", {}).get(missing, {}))
        tip = _short(sub.get("description", "")) if isinstance(sub, dict) else ""
        tip = tip or f"add `{missing}:` to {name}"
        at = document.key_at(path) if path else where
        return [Problem(at, f"{name} is missing the key `{missing}`", tip, "schema")]
    if kind == "not" and error.validator_value == {}:
        return [Problem(document.key_at(path), f"`{path[-1]}` does not apply here "
                        f"({_context(document, path[:-1])})", "remove it", "schema")]
    if kind == "type":
        wanted = error.validator_value
        wanted = " or ".join(wanted) if isinstance(wanted, list) else wanted
        examples = schema.get("examples", [])
        if wanted == "string or number" and examples and isinstance(examples[0], str):
            # A quantity: show one of its own kind (`440 Hz`, `20 C`), not a length.
            words = f"a value such as `{examples[0]}`"
        else:
            words = _article(str(wanted))
        return [Problem(where, f"{name} should be {words}, not {_kind(value)}", hint, "schema")]
    if kind == "enum":
        options = [str(o) for o in error.validator_value]  # type: ignore[union-attr]
        close = difflib.get_close_matches(str(value), options, n=1, cutoff=0.5)
        tip = (f"did you mean `{close[0]}`? " if close else "") + "choose one of: " + ", ".join(
            f"`{o}`" for o in options)
        if isinstance(value, bool):
            tip = ("YAML reads an unquoted yes, no, on or off as true or false; " + tip)
        shown = str(value).lower() if isinstance(value, bool) else value
        return [Problem(where, f"{name}: `{shown}` is not one of the choices", tip, "schema")]
    if kind == "const":
        return [Problem(where, f"{name} must be `{error.validator_value}`", hint, "schema")]
    if kind in ("minimum", "exclusiveMinimum", "maximum", "exclusiveMaximum"):
        words = {"minimum": "at least", "exclusiveMinimum": "greater than",
                 "maximum": "at most", "exclusiveMaximum": "less than"}[kind]
        return [Problem(where, f"{name} must be {words} {error.validator_value}, not {value}",
                        hint, "schema")]
    if kind == "pattern" and "propertyNames" in error.schema_path and isinstance(value, str):
        # The instance is a key of the mapping at ``path``: point at that key.
        return [Problem(document.key_at((*path, value)),
                        f"`{_printable(value)}` cannot be used as a name in {name}",
                        f"{_NAME_RULE}, e.g. `alu-22`", "schema")]
    if kind == "pattern":
        examples = schema.get("examples", [])
        if schema.get("pattern") == _NAME_PATTERN:  # an id: say which characters it takes
            hint = f"{_NAME_RULE} (it names output files)."
        tip = hint + (" Examples: " + ", ".join(f"`{e}`" for e in examples) if examples else "")
        return [Problem(where, f"{name}: `{_printable(value)}` is not written the expected way",
                        tip.strip(), "schema")]
    if kind in ("minItems", "maxItems", "minLength", "maxLength"):
        words = {"minItems": "needs at least {} item(s)", "maxItems": "allows at most {} items",
                 "minLength": "needs at least {} character(s)", "maxLength": "allows at most {} "
                 "characters"}[kind]
        return [Problem(where, f"{name} {words.format(error.validator_value)}", hint, "schema")]
    if kind in ("minProperties", "maxProperties"):
        return [Problem(where, f"{name} has {'too few' if kind == 'minProperties' else 'too many'}"
                        " keys", hint, "schema")]
    if kind == "propertyNames":
        bad = value if isinstance(value, str) else str(value)
        return [Problem(where, f"`{bad}` cannot be used as a name here",
                        "use letters, digits, `-`, `_` and `.` only", "schema")]
    if kind == "oneOf":
        return _one_of(error, document, name, hint)
    return [Problem(where, f"{name}: {error.message}", hint, "schema")]


def _one_of(error: ValidationError, document: Document, name: str, hint: str) -> list[Problem]:
    # Keep only the branches whose type fits the value: their complaint is the real one.
    relevant = [e for e in error.context if not (e.validator == "type" and not e.relative_path)]
    if relevant:
        deepest = max(relevant, key=lambda e: (len(e.absolute_path), -len(e.schema_path)))
        return _describe(deepest, document, hint)
    examples = error.schema.get("examples", []) if isinstance(error.schema, dict) else []
    tip = hint + (" Examples: " + "; ".join(json.dumps(e) for e in examples) if examples else "")
    where = document.at(tuple(error.absolute_path))
    return [Problem(where, f"{name} is not written in a form boresmith knows", tip.strip(),
                    "schema")]


def _printable(value: Any) -> str:
    """The text as written, with line breaks, tabs and other invisible characters escaped."""
    text = str(value)
    return text if text.isprintable() else text.encode("unicode_escape").decode("ascii")


def _dereference(schema: Any) -> Any:
    """A ``{"$ref": "#/$defs/name"}`` subschema replaced by the definition it names."""
    if isinstance(schema, dict) and isinstance(schema.get("$ref"), str):
        ref = schema["$ref"]
        if ref.startswith("#/$defs/"):
            return read_schema(SPEC_SCHEMA).get("$defs", {}).get(ref[len("#/$defs/"):], schema)
    return schema


def _context(document: Document, path: tuple[str | int, ...]) -> str:
    nodes: list[Any] = [document.data]
    for part in path:
        nodes.append(nodes[-1][part])
    for node in reversed(nodes):
        if isinstance(node, dict):
            parts = [f"{k} `{node[k]}`" for k in ("family", "construction", "blowing_end")
                     if k in node]
            if parts:
                return "with " + " and ".join(parts)
    return f"in {dotted(path)}"


def _kind(value: Any) -> str:
    if isinstance(value, bool):
        return f"`{str(value).lower()}` (true/false)"
    if value is None:
        return "empty"
    if isinstance(value, dict):
        return "a mapping"
    if isinstance(value, list):
        return "a list"
    if isinstance(value, str):
        return f"the text `{value}`"
    return f"the number {value}"


def _article(kind: str) -> str:
    words = {"object": "a mapping (keys and values)", "array": "a list", "string": "text",
             "number": "a number", "integer": "a whole number", "boolean": "true or false",
             "string or number": "a value such as `12 mm` or a number"}
    return words.get(kind, kind)


_NAME_PATTERN = "^[A-Za-z0-9][A-Za-z0-9_.-]*$"
"""The schema's pattern for names (stock) and ids (ranks, tube sets, flutes, surveys)."""
_NAME_RULE = ("use letters, digits, `-`, `_` and `.` only (no spaces, no accented letters), "
              "starting with a letter or digit")


def _short(text: str) -> str:
    return text.split(". ")[0].rstrip(".") + "." if text else ""
