"""Passive or active? A 1 kHz low-pass that must drive a 2 kΩ panel meter.

The passive version (meter_drive_passive.toml) is a 10 kΩ / 15 nF RC straight into
the meter: alone it cuts off at 1.06 kHz with unity gain. Connected, the meter's
2 kΩ forms a divider with the 10 kΩ: the gain falls to about a sixth and the corner
moves up six-fold. The active version puts a unity-gain follower between the same RC
and the meter, built here with the Python API. The script prints both side by side.

Run ``python examples/meter_drive.py``; the output is shown in examples/README.md.
"""

from __future__ import annotations

from pathlib import Path

import symfilt
from symfilt import Circuit
from symfilt import Part
from symfilt import format_value

HERE = Path(__file__).resolve().parent


def buffered(passive: Circuit) -> Circuit:
    """The same RC with a follower (ideal op-amp) between the capacitor and the meter."""
    r1, c1 = passive.part("R1"), passive.part("C1")
    parts = [Part.resistor("R1", "amp", "rc", r1.value), Part.capacitor("C1", "rc", "0", c1.value),
             Part.opamp("U1", "rc", "meter", "meter")]
    return Circuit.build(parts, input="amp", output="meter", source=passive.source.value,
                         load=passive.load_resistance.value, title="Strain-gauge amplifier → panel meter, buffered RC")


def row(a) -> str:
    lo, hi = a.numeric["loaded"], a.numeric["ideal"]
    return (f"cutoff {format_value(lo['cutoff_hz'], 'Hz'):>10} (alone {format_value(hi['cutoff_hz'], 'Hz')}), "
            f"DC gain {lo['dc_gain']:.4f} ({lo['dc_gain_db']:+.2f} dB)")


def main() -> None:
    passive = symfilt.load_circuit(HERE / "meter_drive_passive.toml")
    active = buffered(passive)
    for c in (passive, active):
        a = symfilt.analyse(c, sensitivity=False)
        print(c.title)
        print("  " + row(a))
        print(f"  loaded cutoff (rad/s) = {a.loaded.cutoff.value}")
    print("The follower isolates the RC: the meter no longer sets the corner or the gain;")
    print("it must now drive the 2 kΩ meter itself, so check its output current.")


if __name__ == "__main__":
    main()
