"""Noise data of a circuit: temperature, op-amp noise densities, the band and the converter.

Noise is not part of the small-signal model, so it is kept beside the :class:`Circuit`
as a :class:`NoiseSpec`, read from the same circuit file:

* the ``[noise]`` table: ``temperature`` (K, default 300), ``band`` (``"0.1,20k"``, Hz),
  ``sample_rate`` (Hz; the band is then 0 Hz to its Nyquist frequency), ``adc``
  (``"16bit,4.096V"``: resolution and full-scale range) and ``load`` (``"noiseless"``,
  the default: the load is the next stage's input, whose noise is that stage's; or
  ``"thermal"``: R_L is a resistor with its own 4kTR);
* op-amp keys ``en`` (voltage noise density, V/√Hz: ``"10n"`` or ``"10nV/√Hz"``), ``in``
  (current noise density, A/√Hz: ``"2p"``), and the optional 1/f corners ``fc_en`` and
  ``fc_in`` (Hz). An op-amp without ``en`` and ``in`` is taken as noiseless.

Every resistor of the circuit and the source resistance R_s have thermal noise 4kTR;
capacitors, inductors, the op-amp's own model resistances (Rout, Rin) and controlled
sources are noiseless. The Boltzmann constant is the exact SI value (:data:`BOLTZMANN`).

>>> spec = noise_from_dict({"noise": {"temperature": "290", "adc": "16bit,4.096V"}}, "f.toml")
>>> spec.temperature, spec.adc.lsb
(290, 1/16000)
"""

from __future__ import annotations

import re
from dataclasses import dataclass

import sympy

from symfilt.errors import CircuitFileError, UsageError
from symfilt.model.names import clip_name
from symfilt.model.values import parse_value

#: Boltzmann constant, J/K, exact since the 2019 SI redefinition (BIPM, *The International
#: System of Units*, 9th ed., 2019, table 1).
BOLTZMANN = sympy.Rational(1380649, 10**29)
#: Default temperature, K.
DEFAULT_TEMPERATURE = sympy.Integer(300)
#: Op-amp keys of the circuit file that carry noise data (rows of the op-amp parameter table).
OPAMP_NOISE_KEYS = ("en", "in", "fc_en", "fc_in")
#: Keys of the ``[noise]`` table.
NOISE_KEYS = ("temperature", "band", "sample_rate", "adc", "load")
_DENSITY_UNIT = re.compile(r"\s*(V|A)?\s*/\s*(√|rt|sqrt)\s*Hz\s*$")


@dataclass(frozen=True)
class OpampNoise:
    """The noise data of one op-amp.

    Parameters
    ----------
    name : str
        The op-amp's part name.
    en, in_ : sympy.Rational or None
        Voltage (V/√Hz) and current (A/√Hz) noise densities; None when not given.
    fc_en, fc_in : sympy.Rational or None
        Their 1/f corners (Hz); None for white noise.

    Examples
    --------
    >>> OpampNoise("U1", en=sympy.Rational(1, 10**8)).symbols()
    ('en_U1', 'in_U1')
    """

    name: str
    en: sympy.Rational | None = None
    in_: sympy.Rational | None = None
    fc_en: sympy.Rational | None = None
    fc_in: sympy.Rational | None = None

    def symbols(self) -> tuple[str, str]:
        """The symbol names of en and in in the noise formulas: ``en_<name>``, ``in_<name>``.

        Examples
        --------
        >>> OpampNoise("U2").symbols()
        ('en_U2', 'in_U2')
        """
        return f"en_{self.name}", f"in_{self.name}"


@dataclass(frozen=True)
class Adc:
    """A converter: resolution and full-scale input range.

    Parameters
    ----------
    bits : int
    full_scale : sympy.Rational
        Full-scale range in volts (the LSB is ``full_scale / 2**bits``).

    Examples
    --------
    >>> Adc(12, sympy.Integer(4)).lsb
    1/1024
    """

    bits: int
    full_scale: sympy.Rational

    @property
    def lsb(self) -> sympy.Rational:
        """One LSB in volts, ``full_scale / 2**bits``.

        Examples
        --------
        >>> Adc(16, sympy.Rational(4096, 1000)).lsb
        1/16000
        """
        return self.full_scale / 2**self.bits


@dataclass(frozen=True)
class NoiseSpec:
    """Everything the noise analysis needs beside the circuit.

    Parameters
    ----------
    temperature : sympy.Rational
        K.
    opamps : tuple of OpampNoise
    band : tuple of two sympy.Rational, or None
        Integration band (Hz); None: all frequencies (or up to the Nyquist frequency).
    sample_rate : sympy.Rational or None
        Hz; the band is then 0 to half of it.
    adc : Adc or None
    load_thermal : bool
        True when R_L has thermal noise of its own.
    given : bool
        True when the file has noise data (a ``[noise]`` table or an op-amp's ``en``/``in``).

    Examples
    --------
    >>> NoiseSpec().four_kt
    4141947/250000000000000000000000000
    """

    temperature: sympy.Rational = DEFAULT_TEMPERATURE
    opamps: tuple = ()
    band: tuple | None = None
    sample_rate: sympy.Rational | None = None
    adc: Adc | None = None
    load_thermal: bool = False
    given: bool = False

    @property
    def four_kt(self) -> sympy.Rational:
        """4kT in V²/(Hz·Ω), exact.

        Examples
        --------
        >>> float(NoiseSpec().four_kt)
        1.6567788e-20
        """
        return 4 * BOLTZMANN * self.temperature

    def opamp(self, name: str) -> OpampNoise:
        """The noise data of op-amp ``name`` (noiseless when none was given).

        Parameters
        ----------
        name : str

        Examples
        --------
        >>> NoiseSpec().opamp("U1").en is None
        True
        """
        for o in self.opamps:
            if o.name == name:
                return o
        return OpampNoise(name)

    def upper_edge(self):
        """The band's upper edge (Hz), the Nyquist frequency, or None (all frequencies).

        Examples
        --------
        >>> NoiseSpec(sample_rate=sympy.Integer(48000)).upper_edge()
        24000
        """
        if self.band is not None:
            return self.band[1]
        return None if self.sample_rate is None else self.sample_rate / 2


def parse_density(text, where: str) -> sympy.Rational:
    """A noise density: ``"10n"``, ``"10nV/√Hz"``, ``"2 pA/rtHz"`` -> exact value (per √Hz).

    Parameters
    ----------
    text : str or number
    where : str
        For messages.

    Examples
    --------
    >>> parse_density("10nV/√Hz", "U1 en"), parse_density("2p", "U1 in")
    (1/100000000, 1/500000000000)
    """
    if isinstance(text, str):
        text = _DENSITY_UNIT.sub("", text.strip()) or text
    value = parse_value(text, where=where)
    if value <= 0:
        raise CircuitFileError(where, f"a noise density must be positive, got {clip_name(text)}",
                               "give a value such as \"10n\" (10 nV/√Hz)")
    return value


def _positive(text, where: str, what: str) -> sympy.Rational:
    value = parse_value(text, where=where)
    if value <= 0:
        raise CircuitFileError(where, f"the {what} must be positive", f"give a positive {what}")
    return value


def parse_temperature(text, where: str = "--temperature") -> sympy.Rational:
    """A temperature in kelvin: ``"300"``, ``"300K"``, ``"310 K"``.

    Parameters
    ----------
    text : str or number
    where : str

    Examples
    --------
    >>> parse_temperature("310 K")
    310
    """
    if isinstance(text, str):
        text = re.sub(r"(?<=[0-9.])\s*K$", "", text.strip())
    value = _positive(text, where, "temperature (K)")
    if value > 10**4:
        raise CircuitFileError(where, f"a temperature of {clip_name(text)} K is out of range", "give kelvin, e.g. 300")
    return value


def parse_band(text: str, where: str = "--band") -> tuple:
    """An integration band ``"F1,F2"`` in Hz (``0`` allowed as the lower edge).

    Parameters
    ----------
    text : str
    where : str

    Examples
    --------
    >>> parse_band("0.1,20k")
    (1/10, 20000)
    """
    pieces = str(text).split(",")
    if len(pieces) != 2:
        raise UsageError(where, f"band {clip_name(text)} is not two frequencies", "write it as F1,F2, e.g. 0.1,20k")
    lo = sympy.Integer(0) if pieces[0].strip() in ("0", "0Hz") else _usage(lambda: _positive(pieces[0].strip(), where, "band edge"))
    hi = _usage(lambda: _positive(pieces[1].strip(), where, "band edge"))
    if hi <= lo:
        raise UsageError(where, "the band's upper edge is not above its lower edge", "write it as F1,F2 with F1 < F2")
    return lo, hi


def parse_adc(text: str, where: str = "--adc") -> Adc:
    """A converter ``"16bit,4.096V"``: resolution (bits) and full-scale range (V).

    Parameters
    ----------
    text : str
    where : str

    Examples
    --------
    >>> parse_adc("24bit,5V").bits
    24
    """
    pieces = str(text).split(",")
    m = re.fullmatch(r"\s*([0-9]{1,2})\s*(bits?|b)?\s*", pieces[0]) if len(pieces) == 2 else None
    if m is None or not 1 <= int(m.group(1)) <= 32:
        raise UsageError(where, f"converter {clip_name(text)} is not BITS,RANGE", "write it as e.g. 16bit,4.096V")
    return Adc(int(m.group(1)), _usage(lambda: _positive(pieces[1].strip(), where, "full-scale range")))


def _opamp_noise(pname: str, spec: dict, where: str) -> OpampNoise | None:
    if not any(k in spec for k in OPAMP_NOISE_KEYS):
        return None
    got = {k: (parse_density(spec[k], f"{where} {k}") if k in ("en", "in") else
               _positive(spec[k], f"{where} {k}", "1/f corner (Hz)")) for k in OPAMP_NOISE_KEYS if k in spec}
    return OpampNoise(pname, en=got.get("en"), in_=got.get("in"), fc_en=got.get("fc_en"), fc_in=got.get("fc_in"))


def _noise_table(table, name: str) -> dict:
    if not isinstance(table, dict):
        raise CircuitFileError(f"{name} noise", "noise must be a table", "write [noise] on a line of its own")
    extra = sorted(set(table) - set(NOISE_KEYS))
    if extra:
        raise CircuitFileError(f"{name} [noise]", f"unknown key {clip_name(extra[0])!r}", "use " + ", ".join(NOISE_KEYS))
    if "band" in table and "sample_rate" in table:
        raise CircuitFileError(f"{name} [noise]", "both band and sample_rate are given", "give one of them")
    load = table.get("load", "noiseless")
    if load not in ("noiseless", "thermal"):
        raise CircuitFileError(f"{name} [noise] load", f"unknown load noise {clip_name(load)!r}",
                               "use \"noiseless\" or \"thermal\"")
    return table


def noise_from_dict(data: dict, name: str = "<data>", circuit=None) -> NoiseSpec:
    """The noise data of a parsed circuit file (the dict ``tomllib`` gives).

    Parameters
    ----------
    data : dict
    name : str
        The file name, for messages.
    circuit : Circuit, optional
        When given, noise symbols that clash with the circuit's names are refused.

    Examples
    --------
    >>> d = {"parts": {"U1": {"kind": "opamp", "plus": "in", "minus": "out", "out": "out", "en": "4n"}}}
    >>> noise_from_dict(d).opamp("U1").en
    1/250000000
    """
    table = _noise_table(data.get("noise", {}), name)
    where = f"{name} [noise]"
    opamps = []
    for pname, spec in (data.get("parts") or {}).items():
        if isinstance(spec, dict) and spec.get("kind") == "opamp":
            found = _opamp_noise(pname, spec, f"{name} [parts] {clip_name(pname)}")
            if found is not None:
                opamps.append(found)
    spec = NoiseSpec(
        temperature=parse_temperature(table["temperature"], f"{where} temperature") if "temperature" in table
        else DEFAULT_TEMPERATURE,
        opamps=tuple(opamps),
        band=_file_band(table, where), sample_rate=_positive(table["sample_rate"], f"{where} sample_rate", "sample rate")
        if "sample_rate" in table else None,
        adc=_file_adc(table, where), load_thermal=table.get("load") == "thermal",
        given=bool(table) or bool(opamps))
    if circuit is not None:
        check_noise_names(circuit, spec, name)
    return spec


def _file_band(table: dict, where: str):
    try:
        return parse_band(table["band"], f"{where} band") if "band" in table else None
    except UsageError as exc:
        raise CircuitFileError(exc.where, exc.what, exc.fix) from None


def _file_adc(table: dict, where: str):
    try:
        return parse_adc(table["adc"], f"{where} adc") if "adc" in table else None
    except UsageError as exc:
        raise CircuitFileError(exc.where, exc.what, exc.fix) from None


def check_noise_names(circuit, spec: NoiseSpec, where: str = "noise") -> None:
    """Refuse op-amp noise data for parts that are no op-amps, and names that clash with en_/in_ symbols.

    Parameters
    ----------
    circuit : Circuit
    spec : NoiseSpec
    where : str

    Examples
    --------
    >>> from symfilt.model.circuit import Circuit, Part
    >>> c = Circuit.build([Part.opamp("U1", "in", "out", "out"), Part.resistor("en_U1", "out", "0")])
    >>> check_noise_names(c, NoiseSpec(opamps=(OpampNoise("U1", en=sympy.Integer(1)),)))
    Traceback (most recent call last):
    ...
    symfilt.errors.CircuitError: noise: part en_U1 has the name of U1's noise symbol, rename the part
    """
    from symfilt.errors import CircuitError

    names = set(circuit.symbol_table()) | {p.name for p in circuit.parts}
    amps = {p.name for p in circuit.parts if p.kind == "opamp"}
    for o in spec.opamps:
        if o.name not in amps:
            raise CircuitError(where, f"{o.name} has noise data but is no op-amp", "give en and in to op-amps only")
        for sym in o.symbols():
            if sym in names:
                raise CircuitError(where, f"part {sym} has the name of {o.name}'s noise symbol", "rename the part")


def load_noise(path, circuit=None) -> NoiseSpec:
    """The noise data of a circuit file (read after :func:`~symfilt.model.circuit_file.load_circuit`).

    Parameters
    ----------
    path : str or Path
    circuit : Circuit, optional
        The circuit read from the same file, for the name checks.

    Examples
    --------
    >>> import tempfile, pathlib
    >>> p = pathlib.Path(tempfile.mkdtemp()) / "c.toml"
    >>> _ = p.write_text('[noise]\\ntemperature = "310"\\n[parts]\\nR1 = {kind = "resistor", nodes = ["in", "out"]}\\n')
    >>> load_noise(p).temperature
    310
    """
    import tomllib
    from pathlib import Path

    from symfilt.model.circuit_file import read_text_file  # the reader refuses pipes and devices

    p = Path(path)
    data = tomllib.loads(read_text_file(p)[0].removeprefix("\ufeff"))
    return noise_from_dict(data, p.name, circuit)


def with_options(spec: NoiseSpec, *, temperature=None, band=None, sample_rate=None, adc=None,
                 thermal_load: bool = False) -> NoiseSpec:
    """The spec with command-line options put over the file's values (text as on the command line).

    A band replaces the file's sample rate and the other way round.

    Parameters
    ----------
    spec : NoiseSpec
    temperature, band, sample_rate, adc : str or None
        ``"310"``, ``"0.1,20k"``, ``"48k"``, ``"16bit,4.096V"``.
    thermal_load : bool
        Count R_L's thermal noise.

    Raises
    ------
    UsageError
        For both a band and a sample rate.

    Examples
    --------
    >>> with_options(NoiseSpec(), band="1,1k", adc="12bit,2V").band
    (1, 1000)
    """
    from dataclasses import replace

    if band is not None and sample_rate is not None:
        raise UsageError("--band", "both --band and --sample-rate are given", "give one of them")
    changes: dict = {}
    if temperature is not None:
        changes["temperature"] = parse_temperature(temperature)
    if band is not None:
        changes.update(band=parse_band(band), sample_rate=None)
    if sample_rate is not None:
        changes.update(band=None, sample_rate=_usage(lambda: _positive(sample_rate, "--sample-rate", "sample rate")))
    if adc is not None:
        changes["adc"] = parse_adc(adc)
    if thermal_load:
        changes["load_thermal"] = True
    return replace(spec, **changes)


def _usage(make):
    try:
        return make()
    except CircuitFileError as exc:
        raise UsageError(exc.where, exc.what, exc.fix) from None
