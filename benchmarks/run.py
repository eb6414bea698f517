"""Side-by-side timing of symfilt's derivation against the plain sympy approach.

Run from the repository root::

    python benchmarks/run.py               # the full table (several minutes: the plain approach is slow)
    python benchmarks/run.py --quick       # a reduced set, under two minutes
    python benchmarks/run.py --json out.json

For every case the transfer function of the loaded circuit is derived by
``symfilt.analysis.network.derive`` (median of several in-process runs, sympy's cache
cleared before each), and by the plain approach a user would otherwise write
(nodal equations in sympy, ``sympy.solve``, ``sympy.cancel``; see ``plain.py``),
timed in-process inside a child process that is stopped at a time limit. Both
results are checked for exact equality: ``num_a * den_b == num_b * den_a`` as
polynomials (python-flint). The table is Markdown, ready for the README.
"""

from __future__ import annotations

import argparse
import base64
import json
import os
import pickle
import platform
import shutil
import statistics
import subprocess
import sys
import time
from pathlib import Path

HERE = Path(__file__).resolve().parent
sys.path.insert(0, str(HERE))

import sympy  # noqa: E402
from sympy.core.cache import clear_cache  # noqa: E402

from cases import build_case, case_names  # noqa: E402
from symfilt.analysis import network
from symfilt.engine.mna import build_system  # noqa: E402

#: The case the speed target is stated for, with the plain approach's longer limit.
TARGET_CASE = "ladder-8"


def timed(fn, repeats: int, budget: float = 5.0):
    """Median wall time of ``fn()`` over up to ``repeats`` runs (fewer when one run exceeds ``budget``)."""
    times, result = [], None
    for _ in range(repeats):
        clear_cache()
        start = time.perf_counter()
        result = fn()
        times.append(time.perf_counter() - start)
        if sum(times) > budget:
            break
    return statistics.median(times), len(times), result


def terms(expr) -> int:
    return len(sympy.Add.make_args(sympy.expand(expr)))


def plain_child(name: str, repeats: int) -> None:
    """Child-process mode: time the plain approach on one case, print JSON on stdout."""
    from plain import plain_transfer

    circuit = build_case(name)
    seconds, runs, result = timed(lambda: plain_transfer(circuit), repeats, budget=3.0)
    text = base64.b64encode(pickle.dumps(result)).decode("ascii")
    print(json.dumps({"seconds": seconds, "runs": runs, "result": text}))


def rss_child(name: str) -> None:
    """Child-process mode: derive one case, print the peak resident memory in bytes."""
    import resource

    network.derive(build_case(name))
    scale = 1 if sys.platform == "darwin" else 1024  # ru_maxrss is in kB on Linux, bytes on macOS
    print(resource.getrusage(resource.RUSAGE_SELF).ru_maxrss * scale)


def run_plain(name: str, limit: float, repeats: int):
    """(seconds, runs, expression text) of the plain approach, or None when it passed the limit."""
    cmd = [sys.executable, str(Path(__file__).resolve()), "--plain-case", name, "--repeats", str(repeats)]
    try:
        out = subprocess.run(cmd, capture_output=True, text=True, timeout=limit + 5, check=True)
    except subprocess.TimeoutExpired:
        return None
    data = json.loads(out.stdout)
    if data["seconds"] > limit:
        return None
    return data


def same_function(h, text: str) -> bool:
    """Exact check that symfilt's num/den equals the plain result, as polynomials in flint."""
    from symfilt.engine.polybridge import PolyContext

    other = pickle.loads(base64.b64decode(text))  # written by our own child process
    pn, pd = sympy.fraction(sympy.together(other))
    bridge = PolyContext([h.num, h.den, pn, pd])
    f = bridge.to_flint
    return f(h.num) * f(pd) == f(pn) * f(h.den)


def measure_cases(names, args):
    rows = []
    timed_out_ladder = None
    for name in names:
        circuit = build_case(name)
        unknowns = build_system(circuit).size
        seconds, runs, h = timed(lambda: network.derive(circuit), args.repeats)
        row = {"case": name, "title": circuit.title, "parts": len(circuit.parts), "unknowns": unknowns,
               "terms": terms(h.num) + terms(h.den), "symfilt_s": seconds, "symfilt_runs": runs,
               "plain_s": None, "plain_runs": 0, "plain_note": "", "ratio": None, "ratio_at_least": None,
               "equal": None}
        n = int(name.split("-")[1]) if name.startswith("ladder-") else None
        limit = args.target_limit if name == TARGET_CASE else args.plain_limit
        if args.quick and n is not None and n > args.quick_ladder:
            row["plain_note"] = "skipped (--quick)"
        elif n is not None and timed_out_ladder is not None and n > timed_out_ladder:
            row["plain_note"] = f"skipped (n = {timed_out_ladder} passed its limit)"
        else:
            data = run_plain(name, limit, args.repeats)
            if data is None:
                row["plain_note"] = f"> {limit:g} s (stopped)"
                row["ratio_at_least"] = limit / seconds
                if n is not None:
                    timed_out_ladder = n
            else:
                row.update(plain_s=data["seconds"], plain_runs=data["runs"], ratio=data["seconds"] / seconds,
                           equal=same_function(h, data["result"]))
        rows.append(row)
        print(f"  {name}: symfilt {fmt_time(seconds)}, plain {fmt_plain(row)}", file=sys.stderr, flush=True)
    return rows


def fmt_time(seconds) -> str:
    if seconds is None:
        return "-"
    if seconds < 1:
        return f"{seconds * 1000:.3g} ms"
    return f"{seconds:.3g} s"


def fmt_plain(row) -> str:
    return row["plain_note"] if row["plain_s"] is None else fmt_time(row["plain_s"])


def fmt_ratio(row) -> str:
    if row["ratio"] is not None:
        return f"{row['ratio']:,.0f}x"
    if row.get("ratio_at_least"):
        return f"> {row['ratio_at_least']:,.0f}x"
    return "-"


def process_times(repeats: int):
    """Whole-process wall time of the CLI derive vs ``python -c "import sympy"`` (medians)."""
    import importlib.util

    script = Path(sys.executable).parent / "symfilt"
    if importlib.util.find_spec("symfilt.cli") is not None and (script.exists() or shutil.which("symfilt")):
        cmd = [str(script if script.exists() else shutil.which("symfilt")), "derive", "@sallen-key-lowpass",
               "--format", "json"]
        label = "symfilt derive @sallen-key-lowpass --format json"
    else:
        cmd = [sys.executable, "-c", "from symfilt import catalogue, network; "
                                     "network.derive(catalogue.build('sallen-key-lowpass'))"]
        label = "python -c (derive sallen-key-lowpass)"
    base = [sys.executable, "-c", "import sympy"]

    def wall(c):
        out = []
        for _ in range(repeats):
            start = time.perf_counter()
            subprocess.run(c, check=True, stdout=subprocess.DEVNULL)
            out.append(time.perf_counter() - start)
        return statistics.median(out)

    t_cmd, t_base = wall(cmd), wall(base)
    return {"command": label, "command_s": t_cmd, "import_sympy_s": t_base, "ratio": t_cmd / t_base}


def peak_rss(name: str) -> int:
    cmd = [sys.executable, str(Path(__file__).resolve()), "--rss-case", name]
    return int(subprocess.run(cmd, capture_output=True, text=True, check=True).stdout.strip())


def targets(rows, growth, rss, proc):
    by = {r["case"]: r for r in rows}
    out = []
    t8 = by.get(TARGET_CASE)
    if t8 and t8["ratio"] is not None:
        ok = t8["ratio"] >= 50 and t8["equal"]
        out.append(("ladder n = 8: at least 50x faster than plain, identical result",
                    f"{t8['ratio']:,.0f}x, equal: {t8['equal']}", ok))
    else:
        out.append(("ladder n = 8: at least 50x faster than plain, identical result", "not measured", None))
    if growth:
        out.append(("cost growth n = 8 -> 10 at most 2x the result's growth",
                    f"cost x{growth['cost']:.1f}, size x{growth['size']:.1f} (ratio {growth['ratio']:.2f})",
                    growth["ratio"] <= 2.0))
    cat = [r for r in rows if r["case"].startswith("@")]
    if cat:
        worst = max(cat, key=lambda r: r["symfilt_s"])
        out.append(("each catalogue circuit under 50 ms in-process",
                    f"slowest {worst['case']} {fmt_time(worst['symfilt_s'])}", worst["symfilt_s"] < 0.05))
    out.append(("peak RSS for ladder n = 10 below 1 GB", f"{rss / 2**20:.0f} MB", rss < 2**30))
    out.append(("whole-process derive at most 2x `python -c \"import sympy\"`",
                f"{fmt_time(proc['command_s'])} vs {fmt_time(proc['import_sympy_s'])} ({proc['ratio']:.2f}x)",
                proc["ratio"] <= 2.0))
    return out


def markdown(rows, growth, rss, proc, goals, args) -> str:
    lines = ["| case | parts | unknowns | terms | symfilt | plain sympy | ratio | equal |",
             "|---|---:|---:|---:|---:|---:|---:|---|"]
    for r in rows:
        eq = "-" if r["equal"] is None else ("yes" if r["equal"] else "**NO**")
        lines.append(f"| {r['case']} | {r['parts']} | {r['unknowns']} | {r['terms']:,} | {fmt_time(r['symfilt_s'])} "
                     f"| {fmt_plain(r)} | {fmt_ratio(r)} | {eq} |")
    lines += ["", f"symfilt: `network.derive` in-process, median of up to {args.repeats} runs, sympy cache cleared "
              "before each. plain: nodal equations in sympy, `sympy.solve`, `sympy.cancel`, timed in-process in a "
              f"child process stopped after {args.plain_limit:g} s ({args.target_limit:g} s for {TARGET_CASE}, "
              "the target case). equal: num_a*den_b == num_b*den_a as polynomials (exact). terms: terms of "
              "numerator plus denominator.", ""]
    if growth:
        lines.append(f"Growth ladder n = 8 -> 10: cost x{growth['cost']:.1f}, result size x{growth['size']:.1f}.")
    lines.append(f"Peak resident memory, ladder n = 10 (whole process): {rss / 2**20:.0f} MB.")
    lines.append(f"Whole process: `{proc['command']}` {fmt_time(proc['command_s'])}; "
                 f"`python -c \"import sympy\"` {fmt_time(proc['import_sympy_s'])} (x{proc['ratio']:.2f}).")
    lines += ["", "| target | measured | met |", "|---|---|---|"]
    for what, measured, ok in goals:
        lines.append(f"| {what} | {measured} | {'-' if ok is None else ('yes' if ok else '**no**')} |")
    lines += ["", f"Machine: {platform.machine()}, {os.cpu_count()} cores, Python {platform.python_version()}, "
              f"sympy {sympy.__version__}, python-flint {__import__('flint').__version__}."]
    return "\n".join(lines) + "\n"


def main(argv=None) -> int:
    ap = argparse.ArgumentParser(description=__doc__.splitlines()[0])
    ap.add_argument("--quick", action="store_true", help="reduced set: plain approach on small cases only")
    ap.add_argument("--json", metavar="FILE", help="also write the table as JSON")
    ap.add_argument("--repeats", type=int, default=5, help="runs per measurement (median)")
    ap.add_argument("--plain-limit", type=float, default=None, help="seconds before the plain approach is stopped")
    ap.add_argument("--target-limit", type=float, default=600.0,
                    help=f"limit for the plain approach on {TARGET_CASE}, the target case")
    ap.add_argument("--plain-case", help=argparse.SUPPRESS)
    ap.add_argument("--rss-case", help=argparse.SUPPRESS)
    args = ap.parse_args(argv)
    if args.plain_case:
        plain_child(args.plain_case, args.repeats)
        return 0
    if args.rss_case:
        rss_child(args.rss_case)
        return 0
    if args.plain_limit is None:
        args.plain_limit = 10.0 if args.quick else 60.0
    args.quick_ladder = 6
    print("measuring (progress on stderr) ...", file=sys.stderr)
    rows = measure_cases(case_names(), args)
    by = {r["case"]: r for r in rows}
    growth = None
    if "ladder-8" in by and "ladder-10" in by:
        cost = by["ladder-10"]["symfilt_s"] / by["ladder-8"]["symfilt_s"]
        size = by["ladder-10"]["terms"] / by["ladder-8"]["terms"]
        growth = {"cost": cost, "size": size, "ratio": cost / size}
    rss = peak_rss("ladder-10")
    proc = process_times(args.repeats)
    goals = targets(rows, growth, rss, proc)
    text = markdown(rows, growth, rss, proc, goals, args)
    print(text)
    if args.json:
        Path(args.json).write_text(json.dumps(
            {"cases": rows, "growth_n8_n10": growth, "peak_rss_ladder10_bytes": rss, "process": proc,
             "targets": [{"target": w, "measured": m, "met": ok} for w, m, ok in goals],
             "settings": {"repeats": args.repeats, "plain_limit_s": args.plain_limit,
                          "target_limit_s": args.target_limit, "quick": args.quick},
             "machine": {"arch": platform.machine(), "cores": os.cpu_count(),
                         "python": platform.python_version(), "sympy": sympy.__version__}},
            indent=2) + "\n")
    return 0 if all(ok is not False for _w, _m, ok in goals) else 1


if __name__ == "__main__":
    sys.exit(main())
