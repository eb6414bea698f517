"""The ``symfilt`` command line: thin click commands over the Python API.

Results go to stdout, messages to stderr. Exit 0 done, 1 a check found a
difference, 2 bad input or usage (one line ``error: <where>: <what>, <how to fix>``).

A failing command prints that one line and nothing else on stderr: progress (stage
names after two seconds, the spread bar) is shown only when stderr is a terminal, on
one status line that is overwritten and cleared when the command ends; Python warnings
(numpy's RuntimeWarnings) are dropped; ``wrote FILE`` lines come only after every
output of the command has been written.
"""

from __future__ import annotations

import gc
import sys
import warnings

import click

from symfilt.errors import SymfiltError, UsageError
from symfilt.export.approx_report import keep_or_file, parse_approx, partly_symbolic_options
from symfilt.export.console import StatusLine, write_stderr, write_stdout
from symfilt.model.opamp import OPAMP_MODELS

FORMATS = ("text", "latex", "mathml", "json")  # the names of symfilt.export.formats.DERIVE_FORMATS
CLI_QUANTITIES = ("transfer", "dc-gain", "cutoff", "w0", "q", "zin", "zout", "sensitivity")


class _Group(click.Group):
    """A click group whose every failure is one ``error:`` line and exit 2."""

    def invoke(self, ctx):
        try:
            return super().invoke(ctx)
        finally:  # the status line never outlives the command, so an error line stands alone
            status = ctx.meta.get(_STATUS_KEY)
            if status is not None:
                status.clear()

    def main(self, args=None, prog_name=None, complete_var=None, standalone_mode=True, **extra):
        try:
            with warnings.catch_warnings():
                warnings.simplefilter("ignore")  # numbers are checked where they are used; never a stray line
                rv = super().main(args=args, prog_name=prog_name or "symfilt", complete_var=complete_var,
                                  standalone_mode=False, **extra)
        except click.exceptions.Exit as exc:
            rv = exc.exit_code
        except click.ClickException as exc:
            where = exc.ctx.command_path if getattr(exc, "ctx", None) is not None else "symfilt"
            message = " ".join(exc.format_message().split())
            hint = f"run `{where} --help`"
            write_stderr(f"error: {where}: {message.rstrip('.')}, {hint}")
            rv = 2
        except click.exceptions.Abort:
            write_stderr("error: symfilt: interrupted, nothing was written")
            rv = 130
        except SymfiltError as exc:
            write_stderr(f"error: {exc}")
            rv = 2
        except KeyboardInterrupt:
            write_stderr("error: symfilt: interrupted, nothing was written")
            rv = 130
        except RecursionError:
            write_stderr("error: symfilt: the input is nested too deeply, simplify it")
            rv = 2
        except MemoryError:
            write_stderr("error: symfilt: out of memory, give parts values or split the circuit")
            rv = 2
        except Exception as exc:  # noqa: BLE001 - the last guard: a bug must still end in one line
            write_stderr(f"error: symfilt: internal error ({type(exc).__name__}: {exc}), "
                         "please report it with the circuit file")
            rv = 2
        if standalone_mode:
            sys.exit(rv or 0)
        return rv


def load(source: str):
    """A circuit from a file path or ``@name`` of a built-in.

    Parameters
    ----------
    source : str
        A circuit file's path, or ``@`` and a catalogue name.

    Examples
    --------
    >>> load("@rc-lowpass").title
    'RC low-pass'
    """
    if source.startswith("@"):
        from symfilt.model import catalogue
        return catalogue.build(source)
    from symfilt.model.circuit_file import load_circuit  # TOML reading, only for a file
    return load_circuit(source)


def _emit(text: str) -> None:
    """Write the whole result at once, so an error never leaves half an answer."""
    _status().clear()  # stdout and stderr may share a terminal line
    write_stdout(text)


def _inputs(circuit: str) -> list:
    """The input file (never to be overwritten), or nothing for a built-in circuit."""
    return [] if circuit.startswith("@") else [circuit]


def _emit_report(fmt: str, as_dict, as_text, result) -> None:
    """Emit a design report as JSON or text."""
    if fmt == "json":
        from symfilt.export.json import dumps

        _emit(dumps(as_dict(result)) + "\n")
    else:
        _emit(as_text(result))


def _percent(text: str, where: str) -> float:
    t = text.strip()
    try:
        value = float(t[:-1]) / 100 if t.endswith("%") else float(t)
    except ValueError:
        raise UsageError(where, f"{text!r} is not a tolerance", "write it as 2% or 0.02") from None
    if not 0 < value < 1:
        raise UsageError(where, f"{text!r} is outside 0..100%", "write a tolerance such as 2%")
    return value


_STATUS_KEY = "symfilt.status"

#: Seconds of silence before a derivation's stage names are shown.
PROGRESS_DELAY = 2.0


def _stderr_is_terminal() -> bool:
    try:
        return sys.stderr.isatty()
    except (AttributeError, ValueError):  # replaced or closed stream
        return False


def _status() -> StatusLine:
    """The running command's status line (one per invocation, kept in click's context)."""
    ctx = click.get_current_context(silent=True)
    return StatusLine(lambda: _stderr_is_terminal()) if ctx is None else ctx.meta.setdefault(_STATUS_KEY, StatusLine(lambda: _stderr_is_terminal()))


def _say(line: str) -> None:
    """A message line on stderr (a warning, ``wrote FILE``), the status line cleared first."""
    _status().clear()
    write_stderr(line)


def _wrote(*paths) -> None:
    """``wrote FILE`` for each file written (none for ``-``, stdout); called once all of them are."""
    for p in paths:
        if p and str(p) != "-":
            _say(f"wrote {p}")


def _progress():
    """Stage names on the status line, only once a derivation has run longer than two seconds."""
    from symfilt.engine.elimination import DelayedProgress

    status = _status()
    return DelayedProgress(lambda stage: status.show(f"symfilt: {stage}"), delay=PROGRESS_DELAY)


def _progress_from_first_stage():
    """As :func:`_progress`, its two seconds counted from the first stage (the derivation's start)."""
    started = []

    def update(stage: str) -> None:
        if not started:
            started.append(_progress())
        started[0](stage)

    return update


@click.group(name="symfilt", cls=_Group, context_settings={"help_option_names": ["-h", "--help"]})
@click.version_option(package_name="symfilt", prog_name="symfilt")
def cli():
    """Exact symbolic derivation of filter and amplifier stages, loaded and ideal."""


@cli.command(short_help="H(s), gains, w0, Q, cutoff, Zin, Zout, sensitivities: loaded and ideal.")
@click.argument("circuit")
@click.option("--format", "fmt", type=click.Choice(FORMATS), default="text", show_default=True)
@click.option("--quantity", type=click.Choice(CLI_QUANTITIES), help="Print only this quantity.")
@click.option("--substitute", is_flag=True, help="Put the parts' values into the formulas.")
@click.option("--load-limit", "load_limit", metavar="TOL",
              help="Report the smallest R_L and largest R_s keeping the cutoff within TOL (e.g. 2%) of ideal.")
@click.option("--opamp-model", type=click.Choice(list(OPAMP_MODELS)),
              help="Switch every op-amp to this model.")
@click.option("--max-terms", type=click.IntRange(min=10), default=None,
              help="Size budget of the elimination (terms per polynomial).")
@click.option("--at", "at", metavar="FREQ",
              help="Also the sensitivities of |H(jw)| at this frequency in Hz (e.g. 10k).")
@click.option("--probe", "probe_nodes", multiple=True, metavar="NODE",
              help="Also V(NODE)/V(source), the load staying on the output port (repeatable).")
@partly_symbolic_options
def derive(circuit, fmt, quantity, substitute, load_limit, opamp_model, max_terms, at, probe_nodes, keep, approx):
    """Derive H(s), gains, w0, Q, cutoff, Zin, Zout and sensitivities of CIRCUIT (a file or @name)."""
    from symfilt.design.report import report
    from symfilt.export.formats import derive_renderer

    render = derive_renderer(fmt)
    c = load(circuit)
    tol = _percent(load_limit, "--load-limit") if load_limit is not None else None
    progress = _progress_from_first_stage()
    r = report(c, load_limit=tol, opamp_model=opamp_model, substitute=substitute,
               sensitivity=quantity in (None, "sensitivity"), max_terms=max_terms,
               progress=progress, at=at, probes=probe_nodes,
               keep=keep_or_file(circuit, keep), approx=parse_approx(approx))
    for w in r.warnings:
        _say(f"warning: {w}")
    progress(f"writing the {fmt} report")
    _emit(render(r, quantity))


@cli.command(short_help="Is a hand derivation equal to the derived quantity? Says where not.",
             context_settings={"ignore_unknown_options": True})  # a claim may start with a minus sign
@click.argument("circuit")
@click.argument("claim")
@click.option("--quantity", type=click.Choice([q for q in CLI_QUANTITIES if q != "sensitivity"]), default="transfer",
              show_default=True, help="The derived quantity the claim is about.")
@click.option("--ideal", is_flag=True, help="Compare with the ideal (stage alone) form instead of the loaded one.")
@click.option("--format", "fmt", type=click.Choice(["text", "json"]), default="text", show_default=True)
def check(circuit, claim, quantity, ideal, fmt):
    """Check a hand derivation CLAIM (plain text or LaTeX, in s or jw) against CIRCUIT.

    Exit 0 when equal, 1 when different, 2 on bad input.
    """
    from symfilt.analysis.stage import analyse
    from symfilt.claims.judge import equivalent
    from symfilt.export.check_report import check_json, check_text

    c = load(circuit)
    a = analyse(c, sensitivity=False, progress=_progress())
    stage = a.ideal if ideal else a.loaded
    key = quantity.replace("-", "_")
    derived = stage.quantities()[key]
    if derived is None:
        raise UsageError(f"--quantity {quantity}", f"the circuit has no closed form for {quantity}",
                         "check another quantity, such as transfer")
    values = {str(k): v for k, v in c.values().items()}
    result = equivalent(claim, derived, symbols=c.symbol_table(), values=values, ties=c.ties(), quantity=quantity)
    _emit(check_json(result) + "\n" if fmt == "json" else check_text(result))
    return 0 if result.equivalent else 1


@cli.command(short_help="List the built-in circuits, or show or write one.")
@click.argument("name", required=False)
@click.option("--write", "write", type=click.Path(dir_okay=False), help="Write the circuit as a circuit file.")
def catalogue(name, write):
    """List the built-in circuits, or show or write one of them."""
    from symfilt.model import catalogue as cat
    from symfilt.model.circuit_file import circuit_to_text
    from symfilt.export.outfile import write_text_atomic

    if not name:
        width = max(len(n) for n in cat.names())
        _emit("".join(f"@{n:<{width}}  {cat.CATALOGUE[n].summary}\n" for n in cat.names()))
        return
    c = cat.build(name)
    text = circuit_to_text(c)
    if write:
        write_text_atomic(write, text)
        _wrote(write)
    else:
        _emit(text)


DESIGN_FORMATS = ("text", "json")
SERIES_NAMES = ("E6", "E12", "E24", "E48", "E96", "E192")


def _spread_progress():
    """A progress bar on the status line, shown once the sampling has taken more than a second."""
    import time

    from symfilt.export.design_report import progress_line

    started = []
    shown = []
    status = _status()

    def update(done, total):
        if not started:
            started.append(time.monotonic())
        if not shown and time.monotonic() - started[0] < 1.0:
            return
        shown.append(True)
        status.show(progress_line(done, total))

    return update


@cli.command(short_help="Solve for part values meeting targets; snap every part to an E-series.")
@click.argument("circuit")
@click.option("--target", "targets", required=True, multiple=True, metavar="QUANTITY=VALUE",
              help="cutoff=2k or w0=1k (Hz), q=0.707 or q=butterworth|bessel, dc-gain=-2; met with the loading "
                   "included. Repeat for targets met together (one --vary each).")
@click.option("--vary", "varies", required=True, multiple=True, metavar="PART[,PART...]",
              help="A part to solve for; comma-separated parts keep the ratio of their present values. "
                   "Repeat for as many independent parts as targets.")
@click.option("--series", type=click.Choice(SERIES_NAMES, case_sensitive=False), default="E24", show_default=True,
              help="IEC 60063 series every varied part is snapped to.")
@click.option("--format", "fmt", type=click.Choice(DESIGN_FORMATS), default="text", show_default=True)
@click.option("--write", "write", type=click.Path(dir_okay=False),
              help="Write the circuit file with the chosen series values (a new file; the input stays).")
def size(circuit, targets, varies, series, fmt, write):
    """Solve CIRCUIT for part values that meet the targets, and snap them to a preferred series."""
    from symfilt.design.joint import size_design, sized_circuit
    from symfilt.export.joint_report import size_result_dict, size_result_text

    if write:  # a bad target is refused before the work
        from symfilt.export.outfile import output_target

        output_target(write, protect=_inputs(circuit))
    c = load(circuit)
    result = size_design(c, targets, varies, series=series)
    _emit_report(fmt, size_result_dict, size_result_text, result)
    if write:
        from symfilt.export.outfile import write_text_atomic
        from symfilt.model.circuit_file import circuit_to_text

        write_text_atomic(write, circuit_to_text(sized_circuit(c, result)), protect=_inputs(circuit))
        _wrote(write)


@cli.command(short_help="Tolerance spread: Monte Carlo and worst case.")
@click.argument("circuit")
@click.option("--tol", "tols", multiple=True, required=True, metavar="NAME=TOL",
              help="Tolerance of a part (R3=0.1%) or a class (R=1%, C=5%, L=10%); repeat the option.")
@click.option("--runs", type=click.IntRange(100, 2_000_000), default=20000, show_default=True,
              help="Monte Carlo samples.")
@click.option("--seed", type=click.IntRange(min=0), default=None, help="Random seed (one is drawn and shown if not given).")
@click.option("--distribution", type=click.Choice(("uniform", "normal")), default="uniform", show_default=True,
              help="normal takes each tolerance as 3 sigma.")
@click.option("--plot", "plot_file", type=click.Path(dir_okay=False), help="Write a histogram (.png, .svg or .pdf).")
@click.option("--format", "fmt", type=click.Choice(DESIGN_FORMATS), default="text", show_default=True)
def spread(circuit, tols, runs, seed, distribution, plot_file, fmt):
    """Tolerance spread of the loaded cutoff, f0, Q and DC gain: Monte Carlo and worst case."""
    from symfilt.export import design_report
    from symfilt.design.spread import parse_tolerance, spread as run_spread

    c = load(circuit)
    tolerances = dict(parse_tolerance(t) for t in tols)
    if plot_file:  # a bad target is refused before the sampling, not after it
        from symfilt.export.outfile import output_target

        output_target(plot_file, protect=_inputs(circuit))
    result = run_spread(c, tolerances, distribution=distribution, runs=runs, seed=seed, progress=_spread_progress())
    if plot_file:
        design_report.write_histogram(result, plot_file, protect=_inputs(circuit))
    _emit_report(fmt, design_report.spread_dict, design_report.spread_text, result)
    _wrote(plot_file)


@cli.command(short_help="Output voltage, current and slew rate each op-amp must deliver.")
@click.argument("circuit")
@click.option("--amplitude", required=True, metavar="VOLTS", help="Peak volts of the sine at the source, e.g. 2 or 500m.")
@click.option("--frequency", required=True, metavar="HZ", help="Frequency of the sine, e.g. 10k.")
@click.option("--format", "fmt", type=click.Choice(DESIGN_FORMATS), default="text", show_default=True)
def drive(circuit, amplitude, frequency, fmt):
    """Peak output voltage, output current and slew rate each op-amp of CIRCUIT must deliver."""
    from symfilt.design.drive import drive as drive_check
    from symfilt.export import design_report

    result = drive_check(load(circuit), amplitude, frequency)
    for line in design_report.drive_warnings(result):
        _say(f"warning: {line}")
    _emit_report(fmt, design_report.drive_dict, design_report.drive_text, result)


def _frequency(text, where: str):
    """A frequency option in Hz, written like a part value (``10``, ``1k``, ``2.5 kHz``); None stays None."""
    if text is None:
        return None
    from symfilt.model.values import parse_value

    value = parse_value(text, where=where)
    if value <= 0:
        raise UsageError(where, f"{text!r} is not a positive frequency", "give a frequency in Hz, e.g. 10 or 1k")
    return float(value)


@cli.command(short_help="Write a design note (.html, .md or .tex).")
@click.argument("circuit")
@click.option("-o", "--output", "output", required=True, type=click.Path(dir_okay=False),
              help="Note file: .html (standalone page), .md (with the plot as <name>-bode.svg beside it) or .tex.")
@click.option("--fmin", metavar="HZ", help="Lowest frequency of the Bode plot (e.g. 10 or 1k).")
@click.option("--fmax", metavar="HZ", help="Highest frequency of the Bode plot.")
@click.option("--opamp-model", type=click.Choice(list(OPAMP_MODELS)),
              help="Switch every op-amp to this model.")
@click.option("--fragment", is_flag=True, help="A .tex note as the equations-only align fragment.")
@partly_symbolic_options
def note(circuit, output, fmin, fmax, opamp_model, fragment, keep, approx):
    """Write a design note for CIRCUIT (a file or @name): parts, equations, loaded vs ideal, sensitivities, Bode plot."""
    from symfilt.export.formats import note_kind
    from symfilt.export.note_write import write_note
    from symfilt.export.outfile import output_target

    note_kind(output)
    output_target(output, protect=_inputs(circuit))  # refused before the derivation, not after it
    c = load(circuit)
    if opamp_model:
        c = c.with_opamp_model(opamp_model)
    c, bound = c.keeping(keep_or_file(circuit, keep)), parse_approx(approx)
    spec, noise_data = _noise_spec(circuit, c), None
    if spec.given:  # the note gets a noise section when the file has noise data
        from symfilt.analysis.noise_numbers import noise_report

        noise_data = noise_report(c, spec)
    from symfilt.model.sweep import load_note_sweep

    written = write_note(c, output, protect=_inputs(circuit), source=circuit, noise=noise_data,
                         sweep=load_note_sweep(circuit), fragment=fragment,
                         fmin=_frequency(fmin, "--fmin"), fmax=_frequency(fmax, "--fmax"), progress=_progress(),
                         approx=bound)
    _wrote(*written)


@cli.command(short_help="Draw the Bode plot, loaded and ideal overlaid.")
@click.argument("circuit")
@click.option("-o", "--output", "output", type=click.Path(dir_okay=False), help="Plot file: .svg or .png.")
@click.option("--csv", "csv_file", type=click.Path(dir_okay=False), help="Also write the sweep data as CSV.")
@click.option("--fmin", metavar="HZ", help="Lowest frequency (e.g. 10 or 1k); default two decades below the cutoff.")
@click.option("--fmax", metavar="HZ", help="Highest frequency; default two decades above the cutoff.")
@click.option("--points", type=click.IntRange(min=2, max=100_000), default=400, show_default=True,
              help="Number of frequencies, logarithmically spaced.")
@click.option("--opamp-model", type=click.Choice(list(OPAMP_MODELS)),
              help="Switch every op-amp to this model.")
@click.option("--sweep", "sweep_text", metavar="NAME=V1,V2|LO..HI[/N]", help="Loaded curves at each value of a symbol.")
@click.option("--versus", metavar="NAME", help="Plot cutoff and DC gain against a symbol (range from --sweep).")
def plot(circuit, output, csv_file, fmin, fmax, points, opamp_model, sweep_text, versus):
    """Draw the Bode plot of CIRCUIT (a file or @name), loaded and ideal overlaid."""
    from symfilt.analysis.stage import analyse
    from symfilt.analysis.bode import bode_data, csv_text
    from symfilt.export.formats import plot_format
    from symfilt.export.outfile import output_target, write_files_atomic

    if not output and not csv_file:
        raise UsageError("plot", "nothing to write", "give -o FILE (.svg or .png) and/or --csv FILE")
    if (sweep_text or versus) and (csv_file or not output):
        raise UsageError("--csv" if csv_file else "plot", "a sweep is drawn, not written as CSV", "give -o FILE.svg only")
    if output:
        plot_format(output, where=output)
    for target in (csv_file, output):  # refuse a bad target before the work, not after the first file
        if target:
            output_target(target, protect=_inputs(circuit))
    c = load(circuit)
    if opamp_model:
        c = c.with_opamp_model(opamp_model)
    a = analyse(c, sensitivity=False, progress=_progress())
    if sweep_text or versus:
        from symfilt.export.family_plot import sweep_plot_bytes
        from symfilt.export.formats import plot_format
        from symfilt.export.outfile import write_bytes_atomic

        data = sweep_plot_bytes(a, sweep_text, versus, plot_format(output), _frequency(fmin, "--fmin"),
                                _frequency(fmax, "--fmax"), points)
        _status().clear()
        write_bytes_atomic(output, data, protect=_inputs(circuit))
        return _wrote(output)
    data = bode_data(a, None, _frequency(fmin, "--fmin"), _frequency(fmax, "--fmax"), points)
    _status().clear()  # before a write to `-`, stdout
    from symfilt.export.plot import left_out_words, render_bode

    files = ([(csv_file, csv_text(data).encode("utf-8"))] if csv_file else []) + (
        [(output, render_bode(data, plot_format(output)))] if output else [])
    write_files_atomic(files, protect=_inputs(circuit))  # both or neither
    _wrote(csv_file, output)
    if data.left_out:  # the ideal curve was drawn alone: say what is missing
        _say("note: " + left_out_words(data))


@cli.command(short_help="A chain of stages: connected vs alone, each interface's loading, where a buffer helps.")
@click.argument("chain_file")
@click.option("--format", "fmt", type=click.Choice(["text", "json"]), default="text", show_default=True)
@click.option("--tolerance", default="2%", show_default=True, metavar="TOL",
              help="A buffer moving the loaded cutoff or DC gain by less than this is not needed.")
@click.option("--plot", "plot_file", type=click.Path(dir_okay=False),
              help="Also draw the Bode plot of the chain (.svg or .png).")
@click.option("--note", "note_file", type=click.Path(dir_okay=False),
              help="Also write a design note: .html (plot inside) or .md (plot beside it unless --plot names one).")
@click.option("--fmin", metavar="HZ", help="Lowest frequency of the plot.")
@click.option("--fmax", metavar="HZ", help="Highest frequency of the plot.")
@click.option("--max-terms", type=click.IntRange(min=10), default=None,
              help="Size budget of each elimination (terms per polynomial).")
def chain(chain_file, fmt, tolerance, plot_file, note_file, fmin, fmax, max_terms):
    """Analyse CHAIN_FILE: stages connected output to input, each interface's loading, where a buffer helps."""
    from symfilt.design.chain import chain_report
    from symfilt.export.chain_report import chain_dict, chain_outputs, chain_text, write_chain_outputs
    from symfilt.model.chain_file import load_chain

    tol = _percent(tolerance, "--tolerance")
    targets = chain_outputs(note_file, plot_file)  # a bad note or plot name is refused before any work
    ch = load_chain(chain_file)
    protect = [chain_file] + [str(p) for p in ch.files()]
    r = chain_report(ch, tolerance=tol, progress=_progress(), **({} if max_terms is None else {"max_terms": max_terms}))
    write_chain_outputs(r, targets, protect=protect, fmin=_frequency(fmin, "--fmin"), fmax=_frequency(fmax, "--fmax"))
    if fmt == "json":
        from symfilt.export.json import dumps

        _emit(dumps(chain_dict(r)) + "\n")
    else:
        _emit(chain_text(r))
    _wrote(targets.plot, targets.note)


def _noise_spec(source: str, circuit):
    """The noise data of a circuit file (defaults for a built-in circuit)."""
    from symfilt.model.noise import NoiseSpec, load_noise

    return NoiseSpec() if source.startswith("@") else load_noise(source, circuit)


@cli.command(short_help="Output noise, loaded and ideal, against the converter's LSB.")
@click.argument("circuit")
@click.option("--format", "fmt", type=click.Choice(DESIGN_FORMATS), default="text", show_default=True)
@click.option("--temperature", metavar="K", help="Temperature in kelvin (default 300, or [noise] temperature).")
@click.option("--band", metavar="F1,F2", help="Integrate the noise from F1 to F2 Hz, e.g. 0.1,20k.")
@click.option("--sample-rate", "sample_rate", metavar="FS", help="Integrate from 0 Hz to FS/2 (the Nyquist frequency).")
@click.option("--adc", metavar="BITS,RANGE", help="Compare with a converter, e.g. 16bit,4.096V.")
@click.option("--at", "at", metavar="F[,F...]", help="Frequencies of the density table (default 10,1k,10k).")
@click.option("--thermal-load", "thermal_load", is_flag=True, help="Count R_L's own thermal noise.")
@click.option("--max-terms", type=click.IntRange(min=10), default=None, help="Size budget of each derivation.")
def noise(circuit, fmt, temperature, band, sample_rate, adc, at, thermal_load, max_terms):
    """Noise of CIRCUIT (a file or @name): each source's share, RMS in a band, the converter's LSB."""
    from symfilt.analysis.noise_numbers import DEFAULT_AT, noise_report
    from symfilt.export.noise_report import noise_dict, noise_text
    from symfilt.model.noise import with_options

    c = load(circuit)
    spec = with_options(_noise_spec(circuit, c), temperature=temperature, band=band, sample_rate=sample_rate,
                        adc=adc, thermal_load=thermal_load)
    freqs = DEFAULT_AT if at is None else [_frequency(f, "--at") for f in at.split(",")]
    _emit_report(fmt, noise_dict, noise_text, noise_report(c, spec, at=freqs, max_terms=max_terms))


@cli.command(short_help="The built-in scenario: a sensor into an ADC, passive vs buffered.")
def demo():
    """Run the built-in scenario: a sensor into an ADC, passive versus buffered."""
    from symfilt.model import demo as scenario
    from symfilt.analysis.stage import analyse
    from symfilt.export.demo_text import render_demo

    results = [analyse(c, sensitivity=False) for c in scenario.stages()]
    _emit(render_demo(results))


def main(argv=None) -> int:
    """Console entry point: run the command line, return its exit code.

    Run from the console (``argv`` None), the command works in a child process watched by
    :mod:`symfilt.export.watchdog` and stopped past ``--max-memory`` (any command takes it;
    default 1 GB) with one ``error:`` line.

    Parameters
    ----------
    argv : list of str, optional
        The arguments (``sys.argv[1:]`` when None).

    Examples
    --------
    >>> main(["catalogue"])  # doctest: +ELLIPSIS
    @rc-lowpass ...
    0
    """
    from symfilt.export import watchdog

    args = sys.argv[1:] if argv is None else list(argv)
    try:
        limit = watchdog.memory_option(args)
    except SymfiltError as exc:
        write_stderr(f"error: {exc}")
        return 2
    args = watchdog.without_memory_option(args)

    def work() -> int:
        return cli.main(args=args, prog_name="symfilt", standalone_mode=False) or 0

    if argv is None:  # the imports' objects live to the end: frozen (Python's advice before a fork)
        gc.freeze()
        return watchdog.run_watched(work, limit, _memory_message)
    return work()


def _memory_message(limit: int) -> str:
    return (f"error: symfilt: the run outgrew the memory limit of {limit / 1e9:.3g} GB and was stopped, "
            "derive the stages one at a time, or raise the limit with --max-memory (e.g. --max-memory 4G)")


if __name__ == "__main__":  # pragma: no cover
    sys.exit(cli.main(prog_name="symfilt"))
