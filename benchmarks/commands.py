"""Whole-command timings: what a user runs, interleaved with the floor ``python -c "import sympy"``.

Each command and the floor are run alternately (command, floor, command, floor, ...) so that a
change in the machine's load during the run falls on both; the ratio of the medians is the
figure. The fully symbolic ladders are timed as whole reports beside the engine's own time
(``network.derive`` in-process) and the floor.

Run from the repository root (``make bench`` runs it after the derivation table)::

    python benchmarks/commands.py            # every row
    python benchmarks/commands.py --quick    # catalogue derive and one of each other command
"""

from __future__ import annotations

import argparse
import statistics
import subprocess
import sys
import tempfile
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
ROOT = HERE.parent
sys.path.insert(0, str(HERE))

#: Targets as ratios to the floor: (label, command key prefix, at most).
TARGETS = (("catalogue derive (text and JSON)", "derive ", 1.3), ("note", "note ", 2.5),
           ("size", "size ", 1.5), ("spread", "spread ", 1.5))
#: Seconds within which the ladder-12 report must finish.
LADDER12_LIMIT = 15.0
#: Seconds within which ``--keep R_L`` derives the 40-part valued circuit in-process.
KEEP_LIMIT = 1.0


def symfilt_cmd() -> list[str]:
    script = Path(sys.executable).parent / "symfilt"
    return [str(script)] if script.exists() else [sys.executable, "-m", "symfilt.cli"]


def commands(quick: bool, out: Path) -> dict[str, list[str]]:
    """label -> argv of the commands timed against the floor."""
    from symfilt.model import catalogue

    s = symfilt_cmd()
    names = catalogue.names()
    if quick:
        names = names[:4]
    cmds = {}
    for n in names:
        cmds[f"derive @{n}"] = s + ["derive", f"@{n}"]
        cmds[f"derive @{n} json"] = s + ["derive", f"@{n}", "--format", "json"]
    cmds["note @sallen-key-lowpass"] = s + ["note", "@sallen-key-lowpass", "-o", str(out / "note.html")]
    cmds["size @sallen-key-lowpass"] = s + ["size", "@sallen-key-lowpass", "--target", "cutoff=2k", "--vary", "R1"]
    cmds["spread @sallen-key-lowpass"] = s + ["spread", "@sallen-key-lowpass", "--tol", "R=1%", "--tol", "C=5%",
                                             "--runs", "2000", "--seed", "1"]
    cmds["check @rc-lowpass"] = s + ["check", "@rc-lowpass", "R_L/(R1 + R_L + R_s + s*C1*R_L*(R1 + R_s))"]
    cmds["chain geophone"] = s + ["chain", str(ROOT / "examples" / "geophone_chain" / "chain.toml")]
    return cmds


def interleaved(cmd: list[str], floor: list[str], repeats: int) -> tuple[float, float]:
    """Median wall times of ``cmd`` and ``floor``, run alternately ``repeats`` times each."""
    a, b = [], []
    for _ in range(repeats):
        for argv, sink in ((cmd, a), (floor, b)):
            start = time.perf_counter()
            subprocess.run(argv, check=True, stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
            sink.append(time.perf_counter() - start)
    return statistics.median(a), statistics.median(b)


def ladder_rows(ns, repeats: int, out: Path) -> list[dict]:
    """Whole-report time of a fully symbolic ladder (text and JSON) beside the engine's time and the floor."""
    from sympy.core.cache import clear_cache

    from cases import build_case
    from symfilt.analysis import network
    from symfilt.model.circuit_file import circuit_to_text

    floor = [sys.executable, "-c", "import sympy"]
    rows = []
    for n in ns:
        circuit = build_case(f"ladder-{n}")
        times = []
        for _ in range(max(1, repeats // 2)):
            clear_cache()
            start = time.perf_counter()
            network.derive(circuit)
            times.append(time.perf_counter() - start)
        engine = statistics.median(times)
        path = out / f"ladder-{n}.toml"
        path.write_text(circuit_to_text(circuit), encoding="utf-8")
        for fmt in ("json", "text"):
            cmd = symfilt_cmd() + ["derive", str(path), "--format", fmt]
            report, base = interleaved(cmd, floor, max(1, repeats // 2))
            rows.append({"case": f"ladder-{n} {fmt}", "report_s": report, "engine_s": engine, "floor_s": base,
                         "ratio": report / (engine + base)})
            print(f"  ladder-{n} {fmt}: report {report:.2f} s, engine {engine:.2f} s, floor {base:.2f} s",
                  file=sys.stderr, flush=True)
    return rows


def keep_rows(repeats: int, out: Path) -> list[dict]:
    """``--keep R_L`` on the 40-part valued cascade: the derivations in-process (transfer, Zin, Zout and
    each op-amp's loop), the whole report in-process, and the whole command beside the floor."""
    from sympy.core.cache import clear_cache

    from cases import valued_cascade_40
    from symfilt.analysis import network
    from symfilt.analysis.loop import loops
    from symfilt.design.report import report
    from symfilt.model.circuit_file import circuit_to_text

    circuit = valued_cascade_40()
    kept = circuit.keeping("R_L")

    def derivations():
        for quantity in ("transfer", "zin", "zout"):
            network.derive(kept, quantity)
        loops(kept)

    rows = []
    for label, fn in (("derivations", derivations), ("report", lambda: report(circuit, keep="R_L"))):
        times = []
        for _ in range(max(1, repeats // 2)):
            clear_cache()
            start = time.perf_counter()
            fn()
            times.append(time.perf_counter() - start)
        rows.append({"case": f"--keep R_L, 40 parts: {label} in-process", "wall_s": statistics.median(times)})
    path = out / "valued-cascade-40.toml"
    path.write_text(circuit_to_text(circuit), encoding="utf-8")
    cmd, base = interleaved(symfilt_cmd() + ["derive", str(path), "--keep", "R_L"],
                            [sys.executable, "-c", "import sympy"], max(1, repeats // 2))
    rows.append({"case": "--keep R_L, 40 parts: `symfilt derive` whole process", "wall_s": cmd, "floor_s": base})
    for r in rows:
        print(f"  {r['case']}: {r['wall_s']:.2f} s", file=sys.stderr, flush=True)
    return rows


def model_rows(quick: bool) -> list[tuple[str, float]]:
    """Whole-process ``derive`` of the three-op-amp state-variable filter with each finite op-amp
    model (the report then adds the op-amp error and loop gains): once each, no target."""
    models = ("gain",) if quick else ("gain", "single-pole", "two-pole")
    rows = []
    for m in models:
        start = time.perf_counter()
        subprocess.run(symfilt_cmd() + ["derive", "@state-variable", "--opamp-model", m], check=True,
                       stdout=subprocess.DEVNULL, stderr=subprocess.DEVNULL)
        rows.append((f"derive @state-variable --opamp-model {m}", time.perf_counter() - start))
        print(f"  {rows[-1][0]}: {rows[-1][1]:.1f} s", file=sys.stderr, flush=True)
    return rows


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="fewer catalogue circuits, ladder-10 only")
    ap.add_argument("--repeats", type=int, default=5, help="runs of each command and of the floor")
    args = ap.parse_args(argv)
    floor = [sys.executable, "-c", "import sympy"]
    rows = []
    with tempfile.TemporaryDirectory() as tmp:
        for label, cmd in commands(args.quick, Path(tmp)).items():
            t, base = interleaved(cmd, floor, args.repeats)
            rows.append((label, t, base))
            print(f"  {label}: {t * 1000:.0f} ms vs {base * 1000:.0f} ms", file=sys.stderr, flush=True)
        ladders = ladder_rows((10,) if args.quick else (10, 12), args.repeats, Path(tmp))
        keeps = keep_rows(args.repeats, Path(tmp))
    models = model_rows(args.quick)
    lines = ["| command | wall | `import sympy` | ratio |", "|---|---:|---:|---:|"]
    lines += [f"| `symfilt {label}` | {t * 1000:.0f} ms | {b * 1000:.0f} ms | {t / b:.2f}x |" for label, t, b in rows]
    lines += ["", "| report | wall | engine | floor | report / (engine + floor) |", "|---|---:|---:|---:|---:|"]
    lines += [f"| {r['case']} | {r['report_s']:.2f} s | {r['engine_s']:.2f} s | {r['floor_s']:.2f} s | "
              f"{r['ratio']:.2f}x |" for r in ladders]
    lines += ["", "| partly symbolic | wall | `import sympy` |", "|---|---:|---:|"]
    lines += [f"| {r['case']} | {r['wall_s']:.2f} s | "
              + (f"{r['floor_s']:.2f} s |" if "floor_s" in r else "— |") for r in keeps]
    lines += ["", "| finite op-amp models (no target) | wall |", "|---|---:|"]
    lines += [f"| `symfilt {label}` | {t:.1f} s |" for label, t in models]
    lines += ["", "| target | measured | met |", "|---|---|---|"]
    met_all = True
    for what, prefix, limit in TARGETS:
        sel = [t / b for label, t, b in rows if label.startswith(prefix)]
        if not sel:
            continue
        worst = max(sel)
        met_all &= worst <= limit
        lines.append(f"| {what} at most {limit}x `import sympy` | worst {worst:.2f}x | "
                     f"{'yes' if worst <= limit else '**no**'} |")
    for r in ladders:
        if r["case"] == "ladder-10 json":
            ok = r["ratio"] <= 3.0
            met_all &= ok
            lines.append(f"| ladder-10 JSON report at most 3x engine + floor | {r['ratio']:.2f}x | "
                         f"{'yes' if ok else '**no**'} |")
        if r["case"].startswith("ladder-12"):
            ok = r["report_s"] < LADDER12_LIMIT
            met_all &= ok
            lines.append(f"| {r['case']} report under {LADDER12_LIMIT:g} s | {r['report_s']:.1f} s | "
                         f"{'yes' if ok else '**no**'} |")
    derived = keeps[0]["wall_s"]
    met_all &= derived < KEEP_LIMIT
    lines.append(f"| `--keep R_L` on 40 parts derives under {KEEP_LIMIT:g} s in-process | {derived:.2f} s | "
                 f"{'yes' if derived < KEEP_LIMIT else '**no**'} |")
    print("\n".join(lines))
    return 0 if met_all else 1


if __name__ == "__main__":
    sys.exit(main())
