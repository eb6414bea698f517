"""Kiln thermocouple amplifier into an ADC: does the Sallen-Key anti-alias filter hold its shape?

The stage (kiln_antialias.toml) is a unity-gain Sallen-Key low-pass near 10 Hz. The
amplifier drives it through a 1 kΩ isolation resistor and it drives a converter input
of 10 kΩ with 100 pF. The op-amp output is not bothered by the converter (ideal
op-amp), but the isolation resistor adds to R1 and moves f0 and Q. This script prints
both views, the attenuation at the converter's Nyquist frequency, the exact loaded w0,
and how large the isolation resistor may be for a 2 % cutoff shift.

Run ``python examples/kiln_antialias.py``; the output is shown in examples/README.md.
"""

from __future__ import annotations

import math
from pathlib import Path

import symfilt
from symfilt import format_value

HERE = Path(__file__).resolve().parent
SAMPLE_RATE_HZ = 60


def gain_db(h, values, hz: float) -> float:
    """|H(j 2 pi f)| in dB from the exact transfer function."""
    return 20 * math.log10(abs(complex(h.evaluate(values, [2j * math.pi * hz])[0])))


def main() -> None:
    stage = symfilt.load_circuit(HERE / "kiln_antialias.toml")
    a = symfilt.analyse(stage)
    lo, hi = a.numeric["loaded"], a.numeric["ideal"]
    print(stage.title)
    print(f"  f0       as connected {format_value(lo['f0_hz'], 'Hz')}, alone {format_value(hi['f0_hz'], 'Hz')}")
    print(f"  Q        as connected {lo['q']:.4f}, alone {hi['q']:.4f}")
    print(f"  cutoff   as connected {format_value(lo['cutoff_hz'], 'Hz')}, alone {format_value(hi['cutoff_hz'], 'Hz')}")
    nyquist = SAMPLE_RATE_HZ / 2
    print(f"  at the Nyquist frequency ({nyquist:g} Hz): {gain_db(a.loaded.transfer, stage.values(), nyquist):.1f} dB")
    print(f"  loaded w0 = {a.loaded.form.w0}")
    s_cut = a.numeric["loaded"]["sensitivity"]["cutoff"]
    worst = max(s_cut, key=lambda name: abs(s_cut[name]))
    print(f"  the cutoff leans most on {worst}: S = {s_cut[worst]:.3f}")
    for lim in symfilt.load_limits(a, 0.02):
        if lim.value is None:
            print(f"  {lim.fixture}: {symfilt.describe(lim.note)}")
        else:
            word = "at most" if lim.bound == "max" else "at least"
            print(f"  for a 2 % cutoff shift, {lim.fixture} must be {word} {format_value(lim.value, 'Ω')}")


if __name__ == "__main__":
    main()
