"""Command line: ``boresmith check|resolve|build|diff|new|schema|measure``.

All file access, terminal output and exit codes live here; the stages are pure.
Exit codes: 0 success, 1 the spec is wrong (or, for ``diff``, something changed),
2 usage error. Heavy modules (numpy, ezdxf, reportlab) are imported only by the
commands that need them, so ``check`` starts fast.
"""

from __future__ import annotations

import argparse
import json
import sys
from collections.abc import Sequence
from pathlib import Path

from compiler import __version__
from compiler.errors import Note, Problem, SpecError, refuse_if_strict

EXIT_OK, EXIT_SPEC, EXIT_USAGE = 0, 1, 2


class UsageError(Exception):
    """Bad command-line use: a missing file, an unknown option."""


def _read(path: str) -> bytes:
    from compiler.spec.loader import SpecFileError, read_spec_file

    try:
        return read_spec_file(Path(path), path)
    except SpecFileError as exc:
        raise UsageError(str(exc)) from None


def _report(problems: Sequence[Problem]) -> None:
    for problem in problems:
        print(problem.format(), file=sys.stderr)


def cmd_check(args: argparse.Namespace) -> int:
    from compiler.spec import load_spec

    everything: list[Problem] = []
    for path in args.specs:
        try:
            load_spec(_read(path), path)
        except SpecError as exc:
            everything.extend(exc.problems)
    if args.json:
        _write_json(json.dumps([p.as_dict() for p in everything], indent=2, sort_keys=True,
                               ensure_ascii=False) + "\n")
    else:
        _report(everything)
        if not everything:
            names = ", ".join(args.specs)
            print(f"{names}: ok", file=sys.stderr)
    return EXIT_SPEC if everything else EXIT_OK


def _warn(note: Note) -> None:
    """Every warning of every command is printed here, as ``FILE:LINE:COL: warning: ...``."""
    print(note.format(), file=sys.stderr)


def cmd_resolve(args: argparse.Namespace) -> int:
    from compiler.emit import resolved_json, table
    from compiler.resolve.resolver import resolve
    from compiler.spec import load_spec

    resolved = resolve(load_spec(_read(args.spec), args.spec))
    refuse_if_strict(resolved.warnings, args.strict)
    for note in resolved.warnings:
        _warn(note)
    if args.json:
        _write_json(resolved_json.dumps(resolved))
    else:
        sys.stdout.write(table.render(resolved))
    return EXIT_OK


def cmd_build(args: argparse.Namespace) -> int:
    from compiler.build import OutputError, build
    from compiler.options import Overrides

    show = args.progress if args.progress is not None else sys.stderr.isatty()

    def progress(message: str) -> None:
        if show:
            print(f"boresmith: {message}", file=sys.stderr, flush=True)

    overrides = Overrides(paper=args.paper, dxf_version=args.dxf, part_files=args.part_files,
                          strict=args.strict)
    try:
        folder = build(_read(args.spec), args.spec, Path(args.out), overrides, progress,
                       warn=_warn)
    except OutputError as exc:
        raise UsageError(str(exc)) from None
    except OSError as exc:  # the output folder: a file in the way, no permission, disk full
        where = exc.filename or args.out
        raise UsageError(f"cannot write the output under {args.out}: {exc.strerror} ({where}); "
                         "nothing was replaced") from None
    print(f"boresmith: wrote {folder}", file=sys.stderr)
    return EXIT_OK


def cmd_diff(args: argparse.Namespace) -> int:
    from compiler.diff import DiffInputError, run_diff

    try:
        code, text = run_diff(args.old, args.new, Path.cwd(), args.json, warn=_warn,
                              strict=args.strict)
    except DiffInputError as exc:
        raise UsageError(str(exc)) from None
    except SpecError as exc:  # as diff does: 1 means "they differ", so trouble is 2
        _report(exc.problems)
        return EXIT_USAGE
    if args.json:
        _write_json(text)
    else:
        sys.stdout.write(text)
    return code


def cmd_new(args: argparse.Namespace) -> int:
    from compiler.starters import run_new

    code, text = run_new(args.family, Path(args.file) if args.file else None)
    if code == EXIT_OK and args.file is None:
        sys.stdout.write(text)
    else:
        print(f"boresmith: {'error: ' if code else ''}{text}", file=sys.stderr)
    return code


def _per_recording(values: list[str] | None, count: int, option: str) -> list[str | None]:
    if not values:
        return [None] * count
    if len(values) != count:
        raise UsageError(f"{option} is given {len(values)} times for {count} recordings: give "
                         "it once per recording, in the same order")
    return list(values)


def cmd_measure(args: argparse.Namespace) -> int:
    from compiler.recordings import RecordingError, analyse, as_dicts, entries
    from compiler.spec.notes import NoteError, parse_note
    from compiler.spec.units import (
        UnitParseError,
        parse_frequency,
        parse_positive_length,
        parse_temperature,
    )

    try:
        kelvin = parse_temperature(args.temperature)
        a4 = parse_frequency(args.a4)
        for length in args.length or []:
            parse_positive_length(length, None)
    except UnitParseError as exc:
        raise UsageError(f"{exc.message} ({exc.hint})" if exc.hint else exc.message) from None
    notes = _per_recording(args.note, len(args.recordings), "--note")
    for note in args.note or []:
        try:
            parse_note(note)
        except NoteError as exc:
            raise UsageError(f"--note {note}: {exc.message} ({exc.hint})" if exc.hint
                             else f"--note {note}: {exc.message}") from None
    lengths = _per_recording(args.length, len(args.recordings), "--length")
    for name in args.recordings:
        if not Path(name).is_file():
            raise UsageError(f"{name}: " + ("is a folder, not a recording" if Path(name).is_dir()
                                            else "no such file"))
    takes, failed = [], 0
    for name, note, length in zip(args.recordings, notes, lengths, strict=True):
        try:
            takes.append(analyse(Path(name), name, note, length, a4))
        except RecordingError as exc:
            failed += 1
            print(f"{name}: error: {exc.message}" + (f"\n    hint: {exc.hint}" if exc.hint
                                                      else ""), file=sys.stderr)
    if failed:
        print(f"boresmith: {failed} of {len(args.recordings)} recordings could not be "
              "used; nothing was written", file=sys.stderr)
        return EXIT_SPEC
    temperature = " ".join(args.temperature.split())
    if args.json:
        text = json.dumps(as_dicts(takes, kelvin - 273.15), indent=2, sort_keys=True,
                          ensure_ascii=False) + "\n"
    else:
        text = entries(takes, temperature)
    if args.out is None:
        if args.json:
            _write_json(text)
        else:
            sys.stdout.write(text)
        return EXIT_OK
    try:
        with open(args.out, "x", encoding="utf-8", newline="\n") as out:
            out.write(text)
    except FileExistsError:
        raise UsageError(f"{args.out}: already exists; boresmith measure does not overwrite "
                         "files") from None
    except OSError as exc:
        raise UsageError(f"{args.out}: cannot write ({exc.strerror})") from None
    written = "1 measured entry" if len(takes) == 1 else f"{len(takes)} measured entries"
    print(f"boresmith: wrote {args.out} ({written})", file=sys.stderr)
    return EXIT_OK


def cmd_schema(args: argparse.Namespace) -> int:
    from compiler.starters import schema_text, write_schema

    if args.write is None:
        sys.stdout.write(schema_text(args.which))
        return EXIT_OK
    folder = Path(args.write)
    if not folder.is_dir():
        raise UsageError(f"{args.write}: no such folder")
    try:
        written = write_schema(folder, args.which)
    except OSError as exc:
        raise UsageError(f"cannot write into {args.write}: {exc.strerror}") from None
    print(f"boresmith: wrote {written}", file=sys.stderr)
    return EXIT_OK


def build_parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="boresmith",
        description="Compile a wind-pipe spec (YAML) into cut lengths, hole layouts, "
        "DXF cut profiles and PDF build sheets.")
    parser.add_argument("--version", action="version", version=f"boresmith {__version__}")
    sub = parser.add_subparsers(dest="command", metavar="COMMAND")

    check = sub.add_parser("check", help="check specs against the language; report every "
                           "problem at its line and column")
    check.add_argument("specs", nargs="+", metavar="SPEC")
    check.add_argument("--json", action="store_true", help="print the problems as JSON")
    check.set_defaults(run=cmd_check)

    resolve = sub.add_parser("resolve", help="resolve a spec and print every pipe's lengths, "
                             "mouth, holes and predicted pitch")
    resolve.add_argument("spec", metavar="SPEC")
    resolve.add_argument("--json", action="store_true",
                         help="print the resolved model as JSON (as in resolved.json)")
    resolve.add_argument("--strict", action="store_true", help="treat warnings as errors")
    resolve.set_defaults(run=cmd_resolve)

    build = sub.add_parser("build", help="resolve a spec and write resolved.json, DXF cut "
                           "files, the PDF build sheet, the cut list and a manifest")
    build.add_argument("spec", metavar="SPEC")
    build.add_argument("-o", "--out", default="out", metavar="DIR",
                       help="output folder (default: out); the build goes into DIR/<instrument>/")
    build.add_argument("--paper", choices=("a4", "letter"), help="paper size of the build sheet")
    build.add_argument("--dxf", choices=("r2010", "r12"), help="DXF version")
    build.add_argument("--part-files", action="store_true", default=None,
                       help="also write one DXF per part")
    build.add_argument("--strict", action="store_true", help="treat warnings as errors")
    build.add_argument("--progress", action=argparse.BooleanOptionalAction, default=None,
                       help="show progress (default: when stderr is a terminal)")
    build.set_defaults(run=cmd_build)

    diff = sub.add_parser("diff", help="resolve two specs and show what changed, pipe by pipe, "
                          "in mm and cents; FILE@REV reads a file as committed in git; "
                          "exit 0 same, 1 changed, 2 trouble")
    diff.add_argument("old", metavar="OLD", help="a spec file, or FILE@REV (e.g. rank.yaml@HEAD)")
    diff.add_argument("new", metavar="NEW", help="a spec file, or FILE@REV")
    diff.add_argument("--json", action="store_true",
                      help="print the summary, a line per pipe and every change as JSON")
    diff.add_argument("--strict", action="store_true",
                      help="treat warnings as errors (exit 2, as any trouble)")
    diff.set_defaults(run=cmd_diff)

    from compiler.starters import FAMILIES  # a light module: no numpy

    new = sub.add_parser("new", help="print (or write to FILE) a commented starter spec")
    new.add_argument("family", metavar="FAMILY", help="one of: " + ", ".join(FAMILIES))
    new.add_argument("file", nargs="?", metavar="FILE",
                     help="write the starter here (never over an existing file)")
    new.set_defaults(run=cmd_new)

    measure = sub.add_parser(
        "measure", help="find the pitch of recorded pipes (WAV or FLAC) and print their "
        "`measured:` entries for the spec, ready to paste")
    measure.add_argument("recordings", nargs="+", metavar="RECORDING",
                         help="a WAV (PCM or float, mono or stereo) or FLAC file per pipe or "
                         "fingering; a note in the file name (G2.wav, rank-F#3.wav) names it")
    measure.add_argument("-t", "--temperature", required=True, metavar="TEMP",
                         help="the air temperature when recorded, e.g. '19 C' or '66 F'")
    measure.add_argument("--note", action="append", metavar="NOTE",
                         help="the note of the recording (once per recording, in order); "
                         "else the file name's, else the nearest note (flagged)")
    measure.add_argument("--length", action="append", metavar="LENGTH",
                         help="the speaking length as built, with its unit (once per "
                         "recording, in order), if it differs from what boresmith gave")
    measure.add_argument("--a4", default="440 Hz", metavar="FREQ",
                         help="reference pitch for guessing a note from the pitch "
                         "(default 440 Hz)")
    measure.add_argument("-o", "--out", metavar="FILE",
                         help="write the entries to FILE (never over an existing file)")
    measure.add_argument("--json", action="store_true",
                         help="print the pitches, uncertainties and findings as JSON")
    measure.set_defaults(run=cmd_measure)

    from compiler.starters import SCHEMAS

    schema = sub.add_parser("schema", help="print the JSON Schema of the spec language (or of "
                            "resolved.json), or write it into a folder for your editor")
    schema.add_argument("which", nargs="?", default="spec", choices=tuple(SCHEMAS),
                        help="spec (default) or resolved")
    schema.add_argument("--write", metavar="DIR",
                        help="write DIR/<schema file> (replacing an older copy) instead of "
                        "printing it; a spec's first line `# yaml-language-server: "
                        "$schema=boresmith-spec.schema.json` then finds it beside the spec")
    schema.set_defaults(run=cmd_schema)
    return parser


def _tolerant_streams() -> None:
    """A terminal that cannot show a character (``PYTHONIOENCODING=ascii``, a C locale)
    gets it escaped (``\\u2032``) instead of a traceback half way through the output."""
    for stream in (sys.stdout, sys.stderr):
        reconfigure = getattr(stream, "reconfigure", None)
        if reconfigure is not None:
            reconfigure(errors="backslashreplace")


def _write_json(text: str) -> None:
    """JSON on stdout, as ``\\u`` escapes where the terminal's encoding lacks a character
    (``backslashreplace`` alone would write ``\\U0001f600``, which is not JSON)."""
    try:
        text.encode(sys.stdout.encoding or "utf-8")
    except (UnicodeEncodeError, LookupError):
        text = json.dumps(json.loads(text), indent=2, sort_keys=True, ensure_ascii=True) + "\n"
    sys.stdout.write(text)


def main(argv: Sequence[str] | None = None) -> int:
    _tolerant_streams()
    parser = build_parser()
    try:
        args = parser.parse_args(argv)
    except SystemExit as exc:  # argparse exits 2 on usage errors, 0 on --help
        return int(exc.code or 0)
    if not getattr(args, "run", None):
        parser.print_help(sys.stderr)
        return EXIT_USAGE
    try:
        return int(args.run(args))
    except UsageError as exc:
        print(f"boresmith: error: {exc}", file=sys.stderr)
        return EXIT_USAGE
    except SpecError as exc:
        _report(exc.problems)
        return EXIT_SPEC
    except KeyboardInterrupt:
        print("boresmith: interrupted", file=sys.stderr)
        return 130
