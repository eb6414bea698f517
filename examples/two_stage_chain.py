"""Photodiode chain: a passive RC pre-filter followed by a Sallen-Key is not the product of the two.

Each stage was designed alone: the RC (2.2 kΩ, 100 nF) for 723 Hz and the unity-gain
Sallen-Key (10k, 10k, 22n, 10n) for 1.07 kHz. Connected (two_stage_chain.toml), the
Sallen-Key's input impedance loads the RC. This script derives the whole chain
exactly, multiplies the two stages derived alone, and compares the two -3 dB points,
then shows how low the Sallen-Key's input impedance is at the RC's corner.

Run ``python examples/two_stage_chain.py``; the output is shown in examples/README.md.
"""

from __future__ import annotations

import math
from pathlib import Path

import symfilt
from symfilt.analysis.stage import numeric_cutoff
from symfilt.model.circuit import Circuit, Part

HERE = Path(__file__).resolve().parent


def main() -> None:
    chain = symfilt.load_circuit(HERE / "two_stage_chain.toml")
    values = chain.values()
    whole = symfilt.derive(chain)
    # The same two stages, each derived alone: the RC with the source and open output,
    # the Sallen-Key from an ideal source into the ADC.
    rc = Circuit.build([chain.part("R0"), chain.part("C0")], input="tia", output="p", source="50")
    sk = Circuit.build([Part.resistor("R1", "p", "a"), Part.resistor("R2", "a", "b"),
                        Part.capacitor("C1", "a", "out"), Part.capacitor("C2", "b", "0"),
                        Part.opamp("U1", "b", "out", "out")], input="p", output="out", load="symbol")
    product = symfilt.NetworkFunction.from_expr(symfilt.derive(rc).as_expr() * symfilt.derive(sk).as_expr())
    print(chain.title)
    print(f"  order of the chain: {whole.order()}")
    f_chain = numeric_cutoff(whole, values) / (2 * math.pi)
    f_product = numeric_cutoff(product, values) / (2 * math.pi)
    print(f"  -3 dB of the connected chain:        {symfilt.format_value(f_chain, 'Hz')}")
    print(f"  -3 dB of the stages multiplied:      {symfilt.format_value(f_product, 'Hz')}")
    print(f"  the connection moves it by {100 * (f_chain / f_product - 1):+.1f} %")
    zin = symfilt.derive(sk, "zin")
    f_rc = 1 / (2 * math.pi * 2200 * 100e-9)
    z = abs(complex(zin.evaluate(values, [2j * math.pi * f_rc])[0]))
    print(f"  Sallen-Key input impedance at {symfilt.format_value(f_rc, 'Hz')}: {symfilt.format_value(z, 'Ω')}")


if __name__ == "__main__":
    main()
