"""Safe YAML loading that remembers where every key and value came from.

pyyaml's safe loader keeps no positions and silently keeps the last of two equal keys,
so we compose the node graph ourselves and build plain Python data from it, with an
index from each value's path (a tuple of keys and list indices) to its position.
Aliases are allowed, but the expansion is counted so an alias bomb stops at once.
"""

from __future__ import annotations

import hashlib
import pathlib
import re
from dataclasses import dataclass, field
from typing import Any

import yaml

from compiler.errors import Position, Problem, YamlError

MAX_BYTES = 2 * 1024 * 1024
"""Largest spec file accepted (a 610-pipe organ spec is a few kilobytes)."""
MAX_DEPTH = 40
"""Deepest nesting accepted (the spec language needs about 7 levels)."""
MAX_NODES = 200_000
"""Most values built from one file."""
MAX_ALIAS_EXPANSIONS = 5_000
"""Most values built again through aliases; stops alias bombs early."""

Path = tuple[str | int, ...]


@dataclass(frozen=True)
class Document:
    """Plain data (dicts, lists, scalars) from one YAML file, with positions."""

    data: Any
    file: str
    sha256: str = ""
    values: dict[Path, Position] = field(default_factory=dict)
    keys: dict[Path, Position] = field(default_factory=dict)
    problems: tuple[Problem, ...] = ()
    """Problems that did not stop the reading (a duplicate key, a tag): reported with the
    others that ``load_spec`` finds, all at once."""

    def at(self, path: Path) -> Position:
        """Position of the value at ``path``, or of its nearest enclosing value."""
        path = tuple(path)
        while path and path not in self.values:
            path = path[:-1]
        return self.values.get(path, Position(self.file, 1, 1))

    def key_at(self, path: Path) -> Position:
        """Position of the key naming ``path`` (falls back to the value's position)."""
        return self.keys.get(tuple(path)) or self.at(path)


class SpecFileError(Exception):
    """A spec file that cannot be read at all (missing, a folder, no permission)."""


def read_spec_file(path: pathlib.Path, shown: str) -> bytes:
    """The bytes of a spec file; ``SpecFileError`` names it as ``shown`` when unreadable."""
    try:
        return path.read_bytes()
    except FileNotFoundError:
        raise SpecFileError(f"{shown}: no such file") from None
    except IsADirectoryError:
        raise SpecFileError(f"{shown}: is a folder, not a spec file") from None
    except OSError as exc:
        raise SpecFileError(f"{shown}: cannot read ({exc.strerror})") from None


def _position(file: str, node: yaml.Node) -> Position:
    mark = node.start_mark
    return Position(file, mark.line + 1, mark.column + 1)


def _error(file: str, mark: Any, message: str, hint: str = "") -> YamlError:
    if mark is None:
        return YamlError([Problem(Position(file, 1, 1), message, hint, "yaml")])
    position = Position(file, mark.line + 1, mark.column + 1)
    return YamlError([Problem(position, message, hint, "yaml")])


class _Builder:
    """Turns a composed node graph into plain data, recording positions."""

    def __init__(self, file: str) -> None:
        self.file = file
        self.values: dict[Path, Position] = {}
        self.keys: dict[Path, Position] = {}
        self.count = 0
        self.seen: set[int] = set()
        self.expanded = 0
        self.constructor = yaml.SafeLoader("")
        self.problems: list[Problem] = []

    def _problem(self, mark: Any, message: str, hint: str) -> None:
        self.problems.extend(_error(self.file, mark, message, hint).problems)

    def build(self, node: yaml.Node, path: Path, depth: int) -> Any:
        self.count += 1
        if id(node) in self.seen:
            self.expanded += 1
        self.seen.add(id(node))
        if self.count > MAX_NODES or self.expanded > MAX_ALIAS_EXPANSIONS:
            raise _error(self.file, node.start_mark,
                         "the file expands to too many values "
                         f"(over {MAX_ALIAS_EXPANSIONS} through aliases, or {MAX_NODES} in all)",
                         "write the values out instead of nesting aliases")
        if depth > MAX_DEPTH:
            raise _error(self.file, node.start_mark,
                         f"values are nested more than {MAX_DEPTH} levels deep",
                         "the spec language needs only a few levels; check the indentation")
        self.values.setdefault(path, _position(self.file, node))
        if isinstance(node, yaml.MappingNode):
            return self._mapping(node, path, depth)
        if isinstance(node, yaml.SequenceNode):
            return [self.build(item, (*path, i), depth + 1) for i, item in enumerate(node.value)]
        return self._scalar(node)

    def _mapping(self, node: yaml.MappingNode, path: Path, depth: int) -> dict[str, Any]:
        result: dict[str, Any] = {}
        # A bad key is reported and left out; the rest is read on, so every independent
        # problem of the file is found in one run.
        for key_node, value_node in node.value:
            if key_node.tag == "tag:yaml.org,2002:merge":
                self._problem(key_node.start_mark, "merge keys (`<<`) are not supported",
                              "write the keys out, or use an alias for a whole value")
                continue
            if not isinstance(key_node, yaml.ScalarNode):
                self._problem(key_node.start_mark,
                              "a key must be a plain word, not a list or mapping",
                              "write `name: value`")
                continue
            key = str(key_node.value)
            if key in result:
                first = self.keys[(*path, key)]
                self._problem(key_node.start_mark,
                              f"duplicate key `{key}` (first given at line {first.line})",
                              "keep one of them: YAML would silently drop the first")
                continue
            self.keys[(*path, key)] = _position(self.file, key_node)
            result[key] = self.build(value_node, (*path, key), depth + 1)
        return result

    def _scalar(self, node: yaml.Node) -> Any:
        try:
            value = self.constructor.construct_object(node, deep=True)
        except yaml.constructor.ConstructorError as exc:
            self._problem(exc.problem_mark, *_tag_problem(exc))
            return str(node.value)
        # Dates and binary are no quantities of ours; keep the text so errors quote it.
        if not isinstance(value, str | int | float | bool | type(None)):
            return str(node.value)
        return value


def _open_bracket(text: str, mark: Any) -> tuple[Any, str] | None:
    """The innermost `[` or `{` still open where ``mark`` is, and which of the two it is.

    pyyaml's "while parsing a flow node" error marks where the missing value should
    start (often the line after the bracket), not the bracket itself: the tokens before
    the error tell which bracket is still open.
    """
    opened: list[yaml.Token] = []
    try:
        for token in yaml.scan(text, Loader=yaml.SafeLoader):
            if token.start_mark.index >= mark.index:
                break
            if isinstance(token, yaml.FlowSequenceStartToken | yaml.FlowMappingStartToken):
                opened.append(token)
            elif isinstance(token, yaml.FlowSequenceEndToken | yaml.FlowMappingEndToken):
                if opened:
                    opened.pop()
    except yaml.YAMLError:
        pass  # the tokens read before a scanner error still tell what was open
    if not opened:
        return None
    bracket = "{" if isinstance(opened[-1], yaml.FlowMappingStartToken) else "["
    return opened[-1].start_mark, bracket


def _syntax(exc: yaml.MarkedYAMLError, text: str) -> tuple[Any, str, str]:
    """Where a YAML syntax error is, and what it means in plain words, with a hint.

    pyyaml's wording names parser states (``<block end>``, ``flow mapping``); the common
    mistakes behind them are translated, anything else is passed on as pyyaml says it.
    """
    problem, context = exc.problem or "", exc.context or ""
    mark, opened = exc.problem_mark or exc.context_mark, exc.context_mark
    if context.startswith("while parsing a flow") and mark is not None:
        found = _open_bracket(text, mark)
        if found is not None:
            opened = found[0]
            context = "while parsing a flow " + ("mapping" if found[1] == "{" else "sequence")
    at = f"line {opened.line + 1}, column {opened.column + 1}" if opened is not None else ""
    if "'\\t'" in problem or "'\t'" in problem:
        return mark, "a tab character: YAML indents with spaces only", (
            "replace the tab with spaces")
    if context.startswith("while scanning a quoted scalar") and opened is not None:
        return opened, "this quote is never closed", (
            "add the closing quote at the end of the value, on the same line")
    if context.startswith("while parsing a flow") and opened is not None:
        bracket = "`{`" if "mapping" in context else "`[`"
        closing = "`}`" if "mapping" in context else "`]`"
        return mark, f"the {bracket} opened at {at} is not closed before this point", (
            f"close it with {closing}, and separate its items with commas")
    if problem.startswith("expected <block end>"):
        return mark, "this line's indentation does not line up with the lines above it", (
            "indent every key of one mapping (and every `-` of one list) by the same number of "
            "spaces")
    if problem.startswith("mapping values are not allowed here"):
        return mark, "a colon followed by a space inside a value, or a key indented under a " \
            "value", ("put a value that contains `: ` in quotes (`instrument: \"Stops: flute\"`); "
                      "otherwise check the indentation")
    if problem.startswith("found undefined alias"):
        name = problem.split("'")[1] if "'" in problem else "?"
        return mark, f"the alias `*{name}` refers to no anchor `&{name}` above it", (
            f"put `&{name}` before the value it should repeat, or write the value out")
    what = problem or "not valid YAML"
    if context:
        what = f"{context}: {what}"
    if opened is not None and mark is not None and opened.line != mark.line:
        what += f" (the construct began at line {opened.line + 1})"
    return mark, what, "check the indentation, colons and quotes on this line"


def load_document(text: str | bytes, filename: str = "<spec>") -> Document:
    """Parse YAML text into a ``Document``; raise ``YamlError`` at the problem's position."""
    if isinstance(text, bytes):
        if len(text) > MAX_BYTES:
            raise _error(filename, None, f"the file is {len(text)} bytes; the limit is {MAX_BYTES}",
                         "split the instrument into several specs")
        raw = text
        try:
            text = raw.decode("utf-8")
        except UnicodeDecodeError as exc:
            before = raw[:exc.start]
            line_start = before.rfind(b"\n") + 1
            column = len(before[line_start:].decode("utf-8", errors="replace")) + 1
            raise YamlError([Problem(
                Position(filename, before.count(b"\n") + 1, column),
                f"the file is not UTF-8 text (byte {exc.start}, 0x{raw[exc.start]:02x}, "
                "is not a UTF-8 character)",
                "save the spec as UTF-8 (an editor's \"Save with encoding\" or \"Reopen with "
                "encoding\" fixes it)", "yaml")]) from None
    digest = hashlib.sha256(text.encode("utf-8")).hexdigest()
    if len(text.encode("utf-8")) > MAX_BYTES:
        raise _error(filename, None, f"the file is larger than {MAX_BYTES} bytes",
                     "split the instrument into several specs")
    try:
        nodes = list(yaml.compose_all(text, Loader=yaml.SafeLoader))
    except yaml.MarkedYAMLError as exc:
        mark, what, hint = _syntax(exc, text)
        raise _error(filename, mark, f"YAML syntax: {what}", hint) from None
    except yaml.YAMLError as exc:
        raise _error(filename, None, f"YAML syntax: {exc}", "check the file is YAML") from None
    except RecursionError:
        raise _error(filename, None, "values are nested too deeply",
                     "the spec language needs only a few levels") from None
    if not nodes or nodes[0] is None:
        raise _error(filename, None, "the file is empty",
                     "start from `boresmith new open-flue` for a commented example")
    if len(nodes) > 1:
        raise _error(filename, nodes[1].start_mark, "the file holds more than one YAML document",
                     "keep one instrument per file (remove the `---` line)")
    builder = _Builder(filename)
    try:
        data = builder.build(nodes[0], (), 0)
    except yaml.constructor.ConstructorError as exc:
        raise _error(filename, exc.problem_mark, *_tag_problem(exc)) from None
    return Document(data, filename, digest, builder.values, builder.keys,
                    tuple(builder.problems))


def _tag_problem(exc: yaml.constructor.ConstructorError) -> tuple[str, str]:
    problem = str(exc.problem)
    tag = re.search(r"for the tag '([^']*)'", problem)
    if tag:
        shown = tag[1].replace("tag:yaml.org,2002:", "!!")
        problem = (f"the tag `{shown}` is not allowed: a spec holds only text, numbers, "
                   "true/false, lists and mappings")
    return (f"YAML value: {problem}", "remove the tag (the word starting with `!`), or quote "
            "the value if it is meant as text")
