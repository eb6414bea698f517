"""Geophone to seismic logger: three stages designed alone, connected, and where a buffer helps.

The chain file geophone_chain/chain.toml lists an EMI RC at the connector, a unity-gain
Sallen-Key anti-alias filter and the converter's charge-reservoir RC, driven by the
geophone's 2 kΩ and loaded by the converter (1 MΩ ∥ 20 pF). This script derives the chain
connected, the stages alone and buffered, and prints for each interface how hard the next
stage loads the one before and what a unity-gain buffer there would give back.

Run ``python examples/geophone_chain.py``; the output is shown in examples/README.md.
"""

from __future__ import annotations

from pathlib import Path

from symfilt.design.chain import chain_report
from symfilt.model.chain_file import load_chain
from symfilt.model.values import format_value

HERE = Path(__file__).resolve().parent


def main() -> None:
    r = chain_report(load_chain(HERE / "geophone_chain" / "chain.toml"))
    hz = lambda d: format_value(d["cutoff_hz"], "Hz")
    print(r.chain.title)
    for k, st in enumerate(r.stages, start=1):
        print(f"  stage {k} alone: {st.name}, {st.view.form.kind} order {st.view.form.order}, cutoff {hz(st.numeric)}")
    print(f"  stages alone multiplied: cutoff {hz(r.product_numeric)}")
    print(f"  connected, as wired:     cutoff {hz(r.analysis.numeric['loaded'])}")
    print(f"  every interface buffered: cutoff {hz(r.buffered_numeric)}")
    for i in r.interfaces:
        verdict = "worth a buffer" if r.needs_buffer(i) else "no buffer needed"
        print(f"  interface {i.index} ({i.upstream} -> {i.downstream}): |Zout/Zin| at the cutoff "
              f"{i.loading['at_cutoff']:.3f}; buffered there, cutoff {hz(i.buffered)}: {verdict}")
    w = r.worst()
    print(f"  worst interface: {w.index}, between the {w.upstream} and the {w.downstream}")


if __name__ == "__main__":
    main()
