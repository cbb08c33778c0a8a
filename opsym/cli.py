"""The ``opsym`` command: a worked demo, and reports from design files.

Commands::

    opsym demo                      a worked example in an invented scenario
    opsym check FILE...             read design files and report what is wrong
    opsym report FILE [options]     every term, the conditions, the budget, the
                                    frequency response and the noise budget
    opsym rewrite FILE              print the design file as opsym writes it

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
import sys
import time
from collections.abc import Callable, Sequence
from pathlib import Path
from typing import Any, NamedTuple, TextIO

from . import __version__
from .demo import run  # imported here: the demo pulls in the whole library
from .errors import OpsymError
from .io import designfile  # called as designfile.load_design, so tests can stand in
from .io.writer import dump_design
from .output.circuit_text import element_lines
from .output.figures import (
    bode_chart,
    contribution_chart,
    gain_error_chart,
    monte_carlo_histogram,
    noise_density_chart,
    temperature_chart,
)
from .output.notes import design_note
from .output.sections import FrequencySection, NoiseSection
from .output.stability import StabilitySection, stability_warnings
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
        help="write figures (PNG) into DIR: contributions, temperature, Monte Carlo, Bode, "
        "gain error, noise density",
    )  # fmt: skip
    report.add_argument(
        "--quiet", "-q", action="store_true", help="no summary on standard output, no progress"
    )
    report.set_defaults(run=_report)

    rewrite = commands.add_parser(
        "rewrite", help="print a design file as opsym writes it",
        description="Read a design file and print it in opsym's own layout (the same design: "
        "comments are not kept).",
    )  # fmt: skip
    rewrite.add_argument("file", metavar="FILE", help="design file (.toml)")
    rewrite.set_defaults(run=_rewrite)
    return parser


# -- commands ------------------------------------------------------------------------------


def _demo(args: argparse.Namespace) -> int:

    return int(run(sys.stdout))


def _check(args: argparse.Namespace) -> int:

    failed = 0
    for name in args.files:
        try:
            d = designfile.load_design(name)
        except OpsymError as err:
            _fail(str(err))
            failed += 1
            continue
        out = d.output if isinstance(d.output, str) else " - ".join(d.output)
        print(f"{name}: ok: {d.title!r}, {len(d.circuit.elements)} elements, output {out}")
    return 2 if failed else 0


def _rewrite(args: argparse.Namespace) -> int:

    sys.stdout.write(dump_design(designfile.load_design(args.file)))
    return 0


def _report(args: argparse.Namespace) -> int:

    design = designfile.load_design(args.file)
    progress = None if args.quiet else _Progress(sys.stderr)
    study = run_design(design, progress=progress)
    if progress is not None:
        progress.close()
    plans = _figure_plans(study, args.figures) if args.figures is not None else []
    files: dict[Path, str] = {}
    if args.latex is not None:
        files[args.latex] = _note(study, "latex", plans, args.latex, args.standalone)
    if args.markdown is not None:
        files[args.markdown] = _note(study, "markdown", plans, args.markdown, False)
    _write_all(plans, files)
    for warning in study.operating.warnings if study.operating is not None else ():
        print(f"opsym: warning: {_source(study)}: {warning}", file=sys.stderr)
    for warning in stability_warnings(study.stability):
        print(f"opsym: warning: {_source(study)}: {warning}", file=sys.stderr)
    if not args.quiet:
        _summary(study, sys.stdout)
        for path in [*(p.path for p in plans), *files]:
            print(f"wrote {path}", file=sys.stderr)
    return 0


class _OutputError(OpsymError, OSError):
    """An output file could not be written (a user-side fault: exit status 2)."""


# -- report parts ------------------------------------------------------------------------

#: Where a figure goes in the notes: the numeric budget's figures, or a section's.
_BUDGET, _FREQUENCY, _NOISE = "budget", "frequency", "noise"


class _Plan(NamedTuple):
    """One figure to draw: its file, its caption, the note section it belongs to, how."""

    path: Path
    caption: str
    section: str
    draw: Callable[[Path], Any]


def _figure_plans(study: Any, directory: Path) -> list[_Plan]:
    """The figures this study can draw."""
    from functools import partial


    plans: list[_Plan] = []
    r, n = study.response, study.noise
    if r is not None:
        what, band = f"V({r.output}) from {r.signal}", {"f_start": r.f_start, "f_stop": r.f_stop}

        def bode(p: Path) -> Any:
            return bode_chart(r.result, p, source=r.signal, ideal=True, **band)

        def gain_error(p: Path) -> Any:
            return gain_error_chart(r.result, p, signal=r.signal, **band)

        plans.append(_Plan(directory / "bode.png", f"Bode plot: {what}", _FREQUENCY, bode))
        plans.append(
            _Plan(directory / "gain-error.png", f"Gain error: {what}", _FREQUENCY, gain_error)
        )
    if n is not None:
        low, high = _noise_plot_band(study)

        def density(p: Path) -> Any:
            return noise_density_chart(n.result, p, f_start=low, f_stop=high)

        caption = f"Output noise density at {n.budget.output}"
        plans.append(_Plan(directory / "noise-density.png", caption, _NOISE, density))
    if study.budget is not None:
        draw = partial(contribution_chart, study.budget)
        plans.append(_Plan(directory / "contributions.png", "Error contributions", _BUDGET, draw))
    if study.sweep is not None:
        draw = partial(temperature_chart, study.sweep)
        plans.append(_Plan(directory / "temperature.png", "Error over temperature", _BUDGET, draw))
    for i, s in enumerate(study.studies, start=1):
        if s.mc is not None:
            caption = f"Monte Carlo: {s.quantity}"
            draw = partial(monte_carlo_histogram, s)
            plans.append(_Plan(directory / f"monte-carlo-{i}.png", caption, _BUDGET, draw))
    if not plans:
        raise _OutputError(
            "--figures: this design has nothing to draw; give op-amp parameter sets "
            "(for a budget), a [tolerance] study, a [response] or a [noise] table"
        )
    return plans


def _noise_plot_band(study: Any) -> tuple[float, float]:
    """A finite plotting range for the noise band (which may start at 0 or run to ∞)."""
    import math

    n = study.noise
    high = n.f_stop
    if math.isinf(high):
        high = study.response.f_stop if study.response is not None else 1e7
    low = n.f_start if n.f_start > 0 else min(1.0, high * 1e-6)
    if high <= low:
        high = low * 1e6
    return low, high


def _write_all(plans: list[_Plan], files: dict[Path, str]) -> None:
    """Draw every figure in a scratch directory, then write figures and notes together."""
    import shutil
    import tempfile

    with tempfile.TemporaryDirectory() as tmp:
        drawn = []
        for i, plan in enumerate(plans):
            scratch = Path(tmp) / f"{i}{plan.path.suffix}"
            plan.draw(scratch)  # matplotlib missing: MissingDependencyError, exit status 2
            drawn.append((scratch, plan.path))
        try:
            for scratch, path in drawn:
                path.parent.mkdir(parents=True, exist_ok=True)
                shutil.copyfile(scratch, path)
            for path, text in files.items():
                path.parent.mkdir(parents=True, exist_ok=True)
                path.write_text(text, encoding="utf-8")
        except OSError as err:
            raise _OutputError(f"cannot write {err.filename or 'the output'}: "
                               f"{err.strerror or err}") from None  # fmt: skip


def _note(study: Any, fmt: str, plans: list[_Plan], path: Path, standalone: bool) -> str:
    """A design note with its frequency-response and noise sections, figures in place."""
    import os


    here = path.parent.resolve()

    def figures(section: str) -> list[tuple[Path, str]]:
        return [(Path(os.path.relpath(p.path.resolve(), here)), p.caption)
                for p in plans if p.section == section]  # fmt: skip

    r, n = study.response, study.noise
    frequency = noise = None
    if r is not None:
        frequency = FrequencySection(r.result, source=r.signal, points=_response_points(r),
                                     figures=figures(_FREQUENCY))  # fmt: skip
    if n is not None:
        noise = NoiseSection(
            n.result, n.f_start, n.f_stop, figures=figures(_NOISE), signal=n.signal
        )
    d = study.design
    return design_note(
        study.result, study.budget, title=None, conditions=study.conditions,
        choices=study.choices, studies=study.studies, sweep=study.sweep,
        figures=figures(_BUDGET), frequency=frequency, noise=noise, fmt=fmt,
        standalone=standalone, values=d.values, notes=d.notes, parameters=d.opamps,
        resistors=d.resistors, grade=_grade(study), operating=study.operating,
        stability=StabilitySection(study.stability) if study.stability else None,
    )  # fmt: skip


def _grade(study: Any) -> str:
    """The grade the budget took from the parameter sets (its default: the limits)."""
    return study.design.budget.grade if study.design.budget is not None else "max"


def _source(study: Any) -> str:
    """The design file, for warnings."""
    return str(study.design.source)


def _response_points(r: Any) -> list[float]:
    """The note's response table: DC, the ``[response]`` grid and the ``at`` frequencies."""
    out: list[float] = []
    for f in sorted({0.0, *(p.frequency for p in r.grid), *(p.frequency for p in r.points)}):
        if not out or f > out[-1] * (1 + 1e-9):  # a grid point and an `at` point coincide
            out.append(f)
    return out


def _summary(study: Any, out: TextIO) -> None:

    d, res = study.design, study.result

    def say(text: str = "") -> None:
        print(text, file=out)

    target = d.output if isinstance(d.output, str) else f"{d.output[0]} - {d.output[1]}"
    say(f"{d.title}  ({d.source})")
    say("=" * min(78, max(20, len(d.title) + len(d.source) + 4)))
    if d.notes:
        say(d.notes)
        say()
    say("Elements:")
    for line in element_lines(d.circuit, d.values, d.opamps, d.resistors, _grade(study)):
        say(f"  {line}")
    say()
    say("Nominal operating point (signals at their values, error sources at zero, DC):")
    if study.operating is not None:
        for line in study.operating.lines():
            say(f"  {line}")
    else:
        say(f"  not computed: {study.operating_problem}")
    say()
    say(f"Terms of V({target}), each source times its coefficient:")
    width = max((len(str(s)) for s in res.terms), default=4)
    for source in res.terms:
        coeff = res.coefficient(source)  # collected over one denominator, cached
        number = study.numbers.get(source)
        tail = f"   [= {number:.6g}]" if number is not None and not coeff.is_number else ""
        say(f"  {source!s:>{width}} x {coeff}{tail}")
    if study.conditions:
        say()
        say("Null conditions:")
        for request, eq in zip(d.nulls, study.conditions, strict=True):
            say(f"  {request}: {eq.lhs} = {eq.rhs}")
        for choice in study.choices:
            say(f"    {choice.describe()}")
    if study.sensitivities:
        say()
        kind = "Normalized sensitivities" if d.sensitivity.normalized else "Sensitivities"
        say(f"{kind} (of a coefficient to a component):")
        for of, to, s in study.sensitivities:
            say(f"  S({of}, {to}) = {s}")
    if study.budget is not None:
        say()
        say(study.budget.to_text())
    if study.sweep is not None:
        say()
        say(study.sweep.to_text())
    for s in study.studies:
        say()
        say(s.to_text())
    if study.response is not None:
        say()
        say(study.response.to_text())
    if study.noise is not None:
        say()
        say(study.noise.to_text())


class _Progress:
    """Progress on standard error: silent for quick solves, one updating line otherwise."""

    def __init__(self, stream: TextIO, delay: float = 1.0) -> None:
        self.stream = stream
        self.start = time.monotonic()
        self.delay = delay
        self.shown = False
        self.last = 0.0
        self.tty = bool(getattr(stream, "isatty", lambda: False)())

    def __call__(self, done: int, total: int, what: str) -> None:
        now = time.monotonic()
        if now - self.start < self.delay or (now - self.last < 0.5 and done < total):
            return
        self.last = now
        line = f"opsym: solving {done}/{total} {what}"[:78]
        if self.tty:
            self.stream.write("\r" + line.ljust(78))
        else:
            self.stream.write(line + "\n")
        self.stream.flush()
        self.shown = True

    def close(self) -> None:
        if self.shown and self.tty:
            self.stream.write("\n")
            self.stream.flush()
