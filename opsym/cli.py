"""The ``opsym`` command: a worked demo, and reports from design files.

Commands::

    opsym demo                      a worked example in an invented scenario
    opsym check FILE...             read design files and report what is wrong
    opsym report FILE [options]     every term, the conditions, the budget, the
                                    frequency response and the noise budget
    opsym rewrite FILE              print the design file as opsym writes it
    opsym export FILE --netlist OUT write a SPICE netlist to check in a simulator
    opsym example NAME [-o PATH]    print (or write) a shipped example design file

``opsym report`` prints its summary on standard output; ``--latex``,
``--markdown`` and ``--figures`` write design notes and figures as well.
Progress of long derivations goes to standard error.

Exit status: 0 on success, 2 when the input is at fault (a design file that
cannot be read, a value missing for the budget...), 1 on an internal fault.

Examples
--------
>>> main(["check", "no-such-file.toml"])
2
"""

from __future__ import annotations

import argparse
import contextlib
import os
import sys
import threading
import time
from collections.abc import Sequence
from pathlib import Path
from typing import Any, TextIO

from . import __version__
from .demo import run  # imported here: the demo pulls in the whole library
from .errors import OpsymError
from .io import designfile  # called as designfile.load_design, so tests can stand in
from .io.examples import example_names, example_text
from .io.spice import write_netlist
from .io.writer import dump_design
from .output.report import FigurePlan, figure_plans, study_note
from .output.stability import stability_warnings
from .output.summary import summary_text
from .study.design import run_design

__all__ = ["main"]

_BUG = "this is a bug in opsym; please report it with the design file and this message"


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; return the exit status (0, 1 or 2)."""
    _utf8_streams()
    parser = _parser()
    args = parser.parse_args(argv)
    if not getattr(args, "run", None):
        parser.print_help(sys.stderr)
        return 2
    try:
        return int(args.run(args) or 0)
    except OpsymError as err:
        _fail(str(err))
        return 2
    except KeyboardInterrupt:
        _fail("interrupted")
        return 130
    except BrokenPipeError:  # e.g. `opsym report f.toml | head`
        return 0
    except Exception as err:  # the last line of defence: no traceback, but say it is a bug
        _fail(f"internal error ({type(err).__name__}: {err}); {_BUG}")
        return 1


def _utf8_streams() -> None:
    """Write UTF-8 on standard output and error when their locale cannot spell Ω, µ or ‖."""
    for stream in (sys.stdout, sys.stderr):
        try:
            "Ωµ‖±°√—".encode(stream.encoding or "ascii")
        except (UnicodeEncodeError, LookupError):
            reconfigure = getattr(stream, "reconfigure", None)
            if reconfigure is not None:  # a TextIOWrapper; test doubles may not be
                reconfigure(encoding="utf-8")


def _fail(message: str) -> None:
    print(f"opsym: error: {message}", file=sys.stderr)


def _parser() -> argparse.ArgumentParser:
    parser = argparse.ArgumentParser(
        prog="opsym",
        description="Closed-form error terms of op-amp circuits: offset, bias currents, "
        "finite gain, CMRR and PSRR, with null conditions and error budgets; frequency "
        "response and noise.",
        epilog="Design files are described in docs/design-files.md. "
        "Run 'opsym COMMAND --help' for each command's options.",
    )
    parser.add_argument("--version", action="version", version=f"opsym {__version__}")
    commands = parser.add_subparsers(title="commands", metavar="COMMAND")

    demo = commands.add_parser(
        "demo", help="print a worked example", description="Derive and print a worked "
        "example (a two-stage sensor front end, invented values).",
    )  # fmt: skip
    demo.set_defaults(run=_demo)

    check = commands.add_parser(
        "check", help="read design files and report problems",
        description="Read each design file and check it (names, values, connections) "
        "without deriving anything. Prints one line per file.",
    )  # fmt: skip
    check.add_argument("files", nargs="+", metavar="FILE", help="design files (.toml)")
    _netlist_options(check)
    check.set_defaults(run=_check)

    report = commands.add_parser(
        "report", help="derive a design file and print every term, condition and budget",
        description="Derive the output of a design file in closed form, run the analyses it "
        "asks for (budget, tolerance, [response], [noise]), print a summary and optionally "
        "write design notes and figures. Nothing is written unless every analysis succeeds.",
    )  # fmt: skip
    report.add_argument("file", metavar="FILE", help="design file (.toml)")
    report.add_argument("--latex", metavar="PATH", type=Path, help="write a LaTeX design note")
    report.add_argument(
        "--standalone", action="store_true",
        help="with --latex: write a complete document that compiles on its own",
    )  # fmt: skip
    report.add_argument(
        "--markdown", metavar="PATH", type=Path, help="write a Markdown design note"
    )
    report.add_argument(
        "--figures", metavar="DIR", type=Path,
        help="write figures into DIR: contributions, temperature, Monte Carlo, Bode, "
        "gain error, noise density",
    )  # fmt: skip
    report.add_argument(
        "--figure-format", choices=("png", "pdf"), default="png",
        help="with --figures: png (default) or pdf, vector figures that a LaTeX note "
        "includes as sharply as its text",
    )  # fmt: skip
    report.add_argument(
        "--quiet", "-q", action="store_true", help="no summary on standard output, no progress"
    )
    _netlist_options(report)
    report.set_defaults(run=_report)

    rewrite = commands.add_parser(
        "rewrite", help="print a design file as opsym writes it",
        description="Read a design file and print it in opsym's own layout (the same design, "
        "its # comments kept beside the tables and keys they annotate).",
    )  # fmt: skip
    rewrite.add_argument("file", metavar="FILE", help="design file (.toml)")
    rewrite.set_defaults(run=_rewrite)

    export = commands.add_parser(
        "export", help="write a design as a SPICE netlist, to check the numbers in a simulator",
        description="Write the circuit of a design (or netlist) with its values as a SPICE "
        "netlist: op-amps as controlled sources of the same gain model, their offset and bias "
        "currents as V and I sources (docs/netlists.md).",
    )  # fmt: skip
    export.add_argument("file", metavar="FILE", help="design file (.toml) or netlist")
    export.add_argument("--netlist", metavar="PATH", type=Path, required=True,
                        help="the netlist to write (.cir)")  # fmt: skip
    export.add_argument("--grade", choices=("typical", "max"), default="typical",
                        help="parameter-set grade of Vos, Ib, A (default typical)")  # fmt: skip
    _netlist_options(export)
    export.set_defaults(run=_export)

    example = commands.add_parser(
        "example", help="print or write one of the example design files shipped with opsym",
        description="Print a shipped example design file (invented scenarios), or write it "
        "with --output to edit and run with 'opsym report'. --list names them.",
    )  # fmt: skip
    example.add_argument("name", nargs="?", metavar="NAME", help="the example's name")
    example.add_argument("--list", action="store_true", help="list the examples' names")
    example.add_argument("--output", "-o", metavar="PATH", type=Path,
                         help="write the example to PATH instead of printing it")  # fmt: skip
    example.set_defaults(run=_example)
    return parser


def _netlist_options(command: argparse.ArgumentParser) -> None:
    """``--output`` and ``--opamp-pins``: what a SPICE netlist does not say (docs/netlists.md)."""
    netlists = command.add_argument_group("SPICE netlists (.cir, .net, .sp, .spice)")
    netlists.add_argument("--output", metavar="NODE", help="output node (a,b: V(a) - V(b))")
    netlists.add_argument(
        "--opamp-pins", metavar="[MODEL=]PINS", action="append",
        help="pin order of op-amp subcircuits, e.g. --opamp-pins=OPAMP=+,-,v+,v-,out "
        "(without MODEL= for every model; default: +,-,out then ignored supplies)",
    )  # fmt: skip


def _reading(args: argparse.Namespace) -> dict[str, Any]:
    pins: dict[str, list[str]] | list[str] | None = None
    for text in args.opamp_pins or ():
        model, _, order = text.rpartition("=")
        if model:
            pins = {**(pins if isinstance(pins, dict) else {}), model: order.split(",")}
        else:
            pins = order.split(",")
    given = {"output": args.output, "opamps": pins}
    return {k: v for k, v in given.items() if v is not None}


# -- commands ------------------------------------------------------------------------------


def _demo(args: argparse.Namespace) -> int:

    return int(run(sys.stdout))


def _check(args: argparse.Namespace) -> int:

    failed = 0
    for name in args.files:
        try:
            d = designfile.load_design(name, **_reading(args))
        except OpsymError as err:
            _fail(str(err))
            failed += 1
            continue
        out = d.output if isinstance(d.output, str) else " - ".join(d.output)
        print(f"{name}: ok: {d.title!r}, {len(d.circuit.elements)} elements, output {out}")
        if Path(name).suffix.lower() != ".toml":  # a netlist: what the reader skipped or renamed
            for line in filter(None, d.notes.splitlines()):
                print(f"  note: {line}")
    return 2 if failed else 0


def _rewrite(args: argparse.Namespace) -> int:

    design = designfile.load_design(args.file)
    toml = Path(args.file).suffix.lower() == ".toml"  # a netlist's comments are not TOML
    original = Path(args.file).read_text(encoding="utf-8") if toml else None
    sys.stdout.write(dump_design(design, comments=original))
    return 0


def _export(args: argparse.Namespace) -> int:

    text = write_netlist(designfile.load_design(args.file, **_reading(args)), grade=args.grade)
    _write_all([], {args.netlist: text})
    print(f"{args.netlist}: written")
    return 0


def _example(args: argparse.Namespace) -> int:
    if args.list:
        print("\n".join(example_names()))
        return 0
    if args.name is None:
        raise _OutputError("opsym example: give an example's name, or --list to see them")
    text = example_text(args.name)
    if args.output is None:
        sys.stdout.write(text)
        return 0
    if args.output.exists():
        raise _OutputError(f"opsym example: {args.output} exists; give a new file name")
    try:
        args.output.parent.mkdir(parents=True, exist_ok=True)
        _replace(args.output, text.encode("utf-8"))
    except OSError as err:
        raise _OutputError(f"cannot write {args.output}: {err.strerror or err}") from None
    print(f"wrote {args.output}", file=sys.stderr)
    return 0


def _report(args: argparse.Namespace) -> int:

    notes = [p for p in (args.latex, args.markdown) if p is not None]
    _refuse_clashes(notes, [Path(args.file)])  # before the work, not after it
    design = designfile.load_design(args.file, **_reading(args))
    progress = None if args.quiet else _Progress(sys.stderr)
    try:
        study = run_design(design, progress=progress)
        if progress is not None:
            progress.phase("writing the notes")
        plans = (_figure_plans(study, args.figures, args.figure_format)
                 if args.figures is not None else [])  # fmt: skip
        files: dict[Path, str] = {}
        if args.latex is not None:
            files[args.latex] = study_note(study, "latex", plans, args.latex, args.standalone)
        if args.markdown is not None:
            files[args.markdown] = study_note(study, "markdown", plans, args.markdown, False)
        _write_all(plans, files, inputs=[Path(args.file)])
    finally:
        if progress is not None:
            progress.close()
    for warning in study.operating.warnings if study.operating is not None else ():
        print(f"opsym: warning: {_source(study)}: {warning}", file=sys.stderr)
    for warning in stability_warnings(study.stability):
        print(f"opsym: warning: {_source(study)}: {warning}", file=sys.stderr)
    if not args.quiet:
        sys.stdout.write(summary_text(study))
        for path in [*(p.path for p in plans), *files]:
            print(f"wrote {path}", file=sys.stderr)
    return 0


class _OutputError(OpsymError, OSError):
    """An output file could not be written (a user-side fault: exit status 2)."""


# -- report parts ------------------------------------------------------------------------


def _figure_plans(study: Any, directory: Path, fmt: str = "png") -> list[FigurePlan]:
    """The figures this study can draw; an error when there are none."""
    plans = figure_plans(study, directory, fmt)
    if not plans:
        raise _OutputError(
            "--figures: this design has nothing to draw; give op-amp parameter sets "
            "(for a budget), a [tolerance] study, a [response] or a [noise] table"
        )
    return plans


def _write_all(
    plans: list[FigurePlan], files: dict[Path, str], inputs: Sequence[Path] = ()
) -> None:
    """Draw every figure in a scratch directory, then write figures and notes together.

    No output may be an input (the design file) or another output, however the
    path is spelled (relative, ``..``, symbolic links). Each file is written to
    a temporary file in its own folder and renamed into place, so a write that
    fails leaves the old file (or none), never a partial one.
    """
    import tempfile

    targets = [*(p.path for p in plans), *files]
    _refuse_clashes(targets, inputs)
    with tempfile.TemporaryDirectory() as tmp:
        drawn = []
        for i, plan in enumerate(plans):
            scratch = Path(tmp) / f"{i}{plan.path.suffix}"
            plan.draw(scratch)  # matplotlib missing: MissingDependencyError, exit status 2
            drawn.append((scratch, plan.path))
        try:
            for scratch, path in drawn:
                path.parent.mkdir(parents=True, exist_ok=True)
                _replace(path, scratch.read_bytes())
            for path, text in files.items():
                path.parent.mkdir(parents=True, exist_ok=True)
                _replace(path, text.encode("utf-8"))
        except OSError as err:
            raise _OutputError(f"cannot write {err.filename or 'the output'}: "
                               f"{err.strerror or err}") from None  # fmt: skip


def _refuse_clashes(targets: Sequence[Path], inputs: Sequence[Path]) -> None:
    """Raise if an output path is an input or another output (after resolving both)."""
    taken = [(p, "the design file") for p in inputs]
    for path in targets:
        for other, what in taken:
            if path.resolve() == other.resolve() or _same(path, other):
                raise _OutputError(
                    f"the output {str(path)!r} is {what} ({str(other)!r}); give each output "
                    "its own path (nothing was written)"
                )
        taken.append((path, "another output"))


def _same(a: Path, b: Path) -> bool:
    try:
        return os.path.samefile(a, b)
    except OSError:
        return False


def _replace(path: Path, data: bytes) -> None:
    """Write ``path`` through a temporary file in its folder, then rename it into place."""
    import tempfile

    fd, tmp = tempfile.mkstemp(prefix=f".{path.name}.", suffix=".tmp", dir=path.parent)
    mask = os.umask(0)
    os.umask(mask)
    try:
        os.chmod(tmp, 0o666 & ~mask)  # the mode a plain write would give, not mkstemp's 0600
        with os.fdopen(fd, "wb") as f:
            f.write(data)
            f.flush()
            os.fsync(f.fileno())
        os.replace(tmp, path)
    except BaseException:
        with contextlib.suppress(OSError):
            os.unlink(tmp)
        raise


def _source(study: Any) -> str:
    """The design file, for warnings."""
    return str(study.design.source)


class _Progress:
    """Progress on standard error: silent for quick runs, then the phase and time taken.

    Long runs show which phase is running (``deriving the closed form``, ``error
    budget``, ``noise``…), the solver's block count when it reports one, and the
    seconds elapsed: one updating line on a terminal, a line every
    ``interval`` seconds otherwise. A background heartbeat keeps the line alive
    while one long step (a single large block) gives no news of its own.
    """

    def __init__(self, stream: TextIO, delay: float = 1.0, interval: float = 5.0) -> None:
        self.stream = stream
        self.start = time.monotonic()
        self.delay = delay
        self.interval = interval
        self.shown = False
        self.last = 0.0
        self.tty = bool(getattr(stream, "isatty", lambda: False)())
        self.name = "deriving the closed form"
        self.detail = ""
        self._lock = threading.Lock()
        self._stop = threading.Event()
        self._beat = threading.Thread(target=self._heartbeat, name="opsym-progress", daemon=True)
        self._beat.start()

    def __call__(self, done: int, total: int, what: str) -> None:
        with self._lock:
            self.detail = f"solving {done}/{total} {what}"
        self._show(force=False)

    def phase(self, name: str) -> None:
        """Start a new phase of the report (shown at once if the run is already slow)."""
        with self._lock:
            self.name, self.detail = name, ""
        self._show(force=True)

    def close(self) -> None:
        self._stop.set()
        self._beat.join()
        if self.shown and self.tty:
            self.stream.write("\n")
            self.stream.flush()

    def _heartbeat(self) -> None:
        while not self._stop.wait(0.25):
            self._show(force=False)

    def _show(self, force: bool) -> None:
        with self._lock:
            now = time.monotonic()
            gap = 0.5 if self.tty else self.interval
            if now - self.start < self.delay or (now - self.last < gap and not force):
                return
            self.last = now
            detail = f": {self.detail}" if self.detail else ""
            line = f"opsym: {self.name}{detail} ({now - self.start:.0f} s)"[:78]
            if self.tty:
                self.stream.write("\r" + line.ljust(78))
            else:
                self.stream.write(line + "\n")
            self.stream.flush()
            self.shown = True
