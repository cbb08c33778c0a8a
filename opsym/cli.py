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
from collections.abc import Sequence
from pathlib import Path
from typing import Any, TextIO

from . import __version__
from .errors import OpsymError

__all__ = ["main"]

_BUG = "this is a bug in opsym; please report it with the design file and this message"


def main(argv: Sequence[str] | None = None) -> int:
    """Run the command line; return the exit status (0, 1 or 2)."""
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
    from .demo import run  # imported here: the demo pulls in the whole library

    return int(run(sys.stdout))


def _check(args: argparse.Namespace) -> int:
    from .io.designfile import load_design

    failed = 0
    for name in args.files:
        try:
            d = load_design(name)
        except OpsymError as err:
            _fail(str(err))
            failed += 1
            continue
        out = d.output if isinstance(d.output, str) else " - ".join(d.output)
        print(f"{name}: ok: {d.title!r}, {len(d.circuit.elements)} elements, output {out}")
    return 2 if failed else 0


def _rewrite(args: argparse.Namespace) -> int:
    from .io.designfile import load_design
    from .io.writer import dump_design

    sys.stdout.write(dump_design(load_design(args.file)))
    return 0


def _report(args: argparse.Namespace) -> int:
    from .io.designfile import load_design
    from .io.study import run_design

    design = load_design(args.file)
    progress = None if args.quiet else _Progress(sys.stderr)
    study = run_design(design, progress=progress)
    if progress is not None:
        progress.close()
    plans = _figure_plans(study, args.figures) if args.figures is not None else []
    figures = [(path, caption) for path, caption, _ in plans]
    files: dict[Path, str] = {}
    if args.latex is not None:
        files[args.latex] = _note(study, "latex", figures, args.latex, args.standalone)
    if args.markdown is not None:
        files[args.markdown] = _note(study, "markdown", figures, args.markdown, False)
    _write_all(plans, files)
    if not args.quiet:
        _summary(study, sys.stdout)
        for path in [*(p for p, _ in figures), *files]:
            print(f"wrote {path}", file=sys.stderr)
    return 0


class _OutputError(OpsymError, OSError):
    """An output file could not be written (a user-side fault: exit status 2)."""


# -- report parts ------------------------------------------------------------------------


def _figure_plans(study: Any, directory: Path) -> list[tuple[Path, str, Any]]:
    """The figures this study can draw: (path, caption, draw function)."""
    from .output.figures import contribution_chart, monte_carlo_histogram, temperature_chart

    plans: list[tuple[Path, str, Any]] = []
    plans += _frequency_plans(study, directory)
    if study.budget is not None:
        plans.append((directory / "contributions.png", "Error contributions",
                      lambda p: contribution_chart(study.budget, p)))  # fmt: skip
    if study.sweep is not None:
        plans.append((directory / "temperature.png", "Error over temperature",
                      lambda p: temperature_chart(study.sweep, p)))  # fmt: skip
    for i, s in enumerate(study.studies, start=1):
        if s.mc is not None:
            plans.append((directory / f"monte-carlo-{i}.png", f"Monte Carlo: {s.quantity}",
                          lambda p, s=s: monte_carlo_histogram(s, p)))  # fmt: skip
    if not plans:
        raise _OutputError(
            "--figures: this design has nothing to draw; give op-amp parameter sets "
            "(for a budget), a [tolerance] study, a [response] or a [noise] table"
        )
    return plans


def _frequency_plans(study: Any, directory: Path) -> list[tuple[Path, str, Any]]:
    """Bode, gain-error and noise-density figures, where this opsym can draw them."""
    from .output import figures

    plans: list[tuple[Path, str, Any]] = []
    r, n = study.response, study.noise
    wanted = []
    if r is not None:
        what = f"V({r.output}) from {r.signal}"
        wanted += [
            ("bode_chart", "bode.png", f"Bode plot: {what}",
             lambda p, f: f(r.result, p, source=r.signal, f_start=r.f_start, f_stop=r.f_stop,
                            ideal=True)),
            ("gain_error_chart", "gain-error.png", f"Gain error: {what}",
             lambda p, f: f(r.result, p, signal=r.signal, f_start=r.f_start, f_stop=r.f_stop)),
        ]  # fmt: skip
    if n is not None:
        low, high = _noise_plot_band(study)
        wanted.append(
            ("noise_density_chart", "noise-density.png",
             f"Output noise density at {n.budget.output}",
             lambda p, f: f(n.result, p, f_start=low, f_stop=high)),
        )  # fmt: skip
    for name, file, caption, draw in wanted:
        fn = getattr(figures, name, None)
        if fn is None:  # an opsym without that figure: say so, draw the rest
            _fail_note(f"--figures: this opsym cannot draw {file} (no {name}); skipped")
            continue
        plans.append((directory / file, caption, lambda p, d=draw, f=fn: d(p, f)))
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


def _fail_note(message: str) -> None:
    print(f"opsym: note: {message}", file=sys.stderr)


def _write_all(plans: list[tuple[Path, str, Any]], files: dict[Path, str]) -> None:
    """Draw every figure in a scratch directory, then write figures and notes together."""
    import shutil
    import tempfile

    with tempfile.TemporaryDirectory() as tmp:
        drawn = []
        for i, (path, _caption, draw) in enumerate(plans):
            scratch = Path(tmp) / f"{i}{path.suffix}"
            draw(scratch)
            drawn.append((scratch, path))
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


def _note(study: Any, fmt: str, figures: list[tuple[Path, str]], path: Path, standalone: bool):
    import os

    from .output.notes import design_note

    here = path.parent.resolve()
    figs = [(Path(os.path.relpath(p.resolve(), here)), caption) for p, caption in figures]
    note = design_note(
        study.result, study.budget, title=None, conditions=study.conditions,
        choices=study.choices, studies=study.studies, sweep=study.sweep, figures=figs,
        fmt=fmt, standalone=standalone,
    )  # fmt: skip
    return _with_sections(note, _frequency_sections(study, fmt), fmt)


def _with_sections(note: str, sections: str, fmt: str) -> str:
    """Put ``sections`` into the note before its caution, which stays last."""
    if not sections:
        return note
    marker = "### Caution" if fmt == "markdown" else r"\subsection*{Caution}"
    at = note.rfind(marker)
    if at < 0:  # pragma: no cover - every note ends with the caution
        end = note.rfind(r"\end{document}")
        at = end if end >= 0 else len(note)
    return note[:at] + sections + "\n" + note[at:]


def _frequency_sections(study: Any, fmt: str) -> str:
    """The response and noise sections of a design note (Markdown or LaTeX)."""
    from .output import latex as formulas

    parts: list[str] = []
    r, n = study.response, study.noise
    if r is not None:
        parts += _section("Frequency response", _transfer_equation(r, formulas), r.tables(), fmt)
    if n is not None:
        noise_latex = getattr(formulas, "noise_latex", None)
        equation = str(noise_latex(n.result)) if noise_latex is not None else None
        parts += _section("Noise", equation, [n.budget.table()], fmt, n.notes())
    return "\n".join(parts)


def _transfer_equation(r: Any, formulas: Any) -> str:
    transfer_latex = getattr(formulas, "transfer_latex", None)
    if transfer_latex is not None:
        return str(transfer_latex(r.symbolic, source=r.signal))
    import sympy as sp

    names = r.symbolic.symbol_latex() if hasattr(r.symbolic, "symbol_latex") else {}
    coeff = r.symbolic.coefficient(r.signal)
    return "H(s) = " + sp.latex(coeff, symbol_names=dict(names))


def _section(
    title: str, equation: str | None, tables: list[Any], fmt: str, notes: Sequence[str] = ()
) -> list[str]:
    from .output.tables import latex_text

    if fmt == "markdown":
        out = [f"### {title}", ""]
        if equation:
            out += ["$$", _bare_math(equation), "$$", ""]
        for t in tables:
            out += [t.to_markdown(), ""]
        out += [f"- {line}" for line in notes]
        return [*out, ""] if notes else out
    out = [r"\subsection*{" + latex_text(title) + "}"]
    if equation:
        body = _bare_math(equation)
        out += [body] if r"\begin{" in body else [r"\[", body, r"\]"]
    for t in tables:
        out += [r"\begin{center}"]
        if t.caption:
            out += [r"\textbf{" + latex_text(t.caption) + r"}\par\smallskip"]
        out += [t.to_latex(float_env=False), r"\end{center}"]
    out += [r"\par{\footnotesize " + latex_text(line) + "}" for line in notes]
    return out


def _bare_math(text: str) -> str:
    """An equation without display delimiters, whichever way the formatter wrote it."""
    s = text.strip()
    for left, right in ((r"\[", r"\]"), ("$$", "$$"), ("$", "$")):
        if s.startswith(left) and s.endswith(right) and len(s) > len(left) + len(right):
            return s[len(left) : -len(right)].strip()
    return s


def _summary(study: Any, out: TextIO) -> None:
    from .numeric.units import format_si

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
    for e in d.circuit.elements:
        value = d.values.get(e.name)
        shown = f" = {format_si(float(value), _unit_of(e))}" if value is not None else ""
        say(f"  {e.describe()}{shown}")
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


def _unit_of(element: Any) -> str:
    units = {"resistor": "Ω", "capacitor": "F", "inductor": "H", "voltage source": "V",
             "current source": "A"}  # fmt: skip
    return units.get(element.kind, "")


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
