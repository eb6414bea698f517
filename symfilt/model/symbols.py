"""A circuit's symbols: the table of roles and values, and new values put in.

The bodies of :meth:`Circuit.symbols <symfilt.model.circuit.Circuit.symbols>` and
:meth:`Circuit.with_values <symfilt.model.circuit.Circuit.with_values>`.
"""

from __future__ import annotations

from dataclasses import replace
from typing import Mapping

from symfilt.errors import CircuitError
from symfilt.model.circuit import LOAD_C, LOAD_R, S, SOURCE_R, Circuit, Fixture, Parameter, part_symbol
from symfilt.model.opamp import opamp_parameters, parameter_of_symbol
from symfilt.model.values import parse_value


def symbol_rows(circuit: Circuit) -> dict[str, dict]:
    """Every symbol of the circuit with its role and value (see :meth:`Circuit.symbols`).

    Parameters
    ----------
    circuit : Circuit

    Examples
    --------
    >>> from symfilt.model.circuit import Part
    >>> symbol_rows(Circuit.build([Part.resistor("R1", "in", "out", "1k"), Part.capacitor("C1", "out", "0")]))["C1"]
    {'role': 'part', 'value': None, 'symbol': C1, 'kind': 'capacitor'}
    """
    from symfilt.model.ties import parameter_units, tie_values

    out: dict[str, dict] = {}
    units = parameter_units(circuit) if circuit.parameters else {}
    for q in circuit.parameters:
        out[q.name] = {"role": "parameter", "value": q.value, "symbol": q.symbol, "unit": units.get(q.name)}
    tied = tie_values(circuit) if any(p.tie for p in circuit.parts) else {}
    for p in circuit.parts:
        if p.kind == "opamp":
            for name, param, value in opamp_parameters(p):
                out[name] = {"role": "opamp", "value": value, "symbol": part_symbol(name), "unit": param.unit}
        elif p.tie is not None:
            out[p.name] = {"role": "part", "value": tied.get(p.name), "symbol": p.symbol, "kind": p.kind,
                           "tie": p.tie}
        else:
            out[p.name] = {"role": "part", "value": p.value, "symbol": p.symbol, "kind": p.kind}
    if circuit.source.present:
        out[SOURCE_R] = {"role": "source", "value": circuit.source.value, "symbol": part_symbol(SOURCE_R)}
    if circuit.load_resistance.present:
        out[LOAD_R] = {"role": "load", "value": circuit.load_resistance.value, "symbol": part_symbol(LOAD_R)}
    if circuit.load_capacitance.present:
        out[LOAD_C] = {"role": "load", "value": circuit.load_capacitance.value, "symbol": part_symbol(LOAD_C)}
    out["s"] = {"role": "laplace", "value": None, "symbol": S}
    return out


def with_values(circuit: Circuit, values: Mapping[str, object]) -> Circuit:
    """A copy with some part, parameter or fixture values replaced (see :meth:`Circuit.with_values`).

    Parameters
    ----------
    circuit : Circuit
    values : mapping of str to str or number
        Symbol name -> new value.

    Examples
    --------
    >>> from symfilt.model.circuit import Part
    >>> c = Circuit.build([Part.resistor("R1", "in", "out", "R"), Part.capacitor("C1", "out", "0")],
    ...                   parameters={"R": "1k"})
    >>> with_values(c, {"R": "2k"}).values()[part_symbol("R")]
    2000
    """
    parts = list(circuit.parts)
    fixtures = {"source": circuit.source, "load_resistance": circuit.load_resistance,
                "load_capacitance": circuit.load_capacitance}
    keys = {SOURCE_R: "source", LOAD_R: "load_resistance", LOAD_C: "load_capacitance"}
    params = {q.name: q for q in circuit.parameters}
    for name, v in values.items():
        if name in params:
            params[name] = Parameter.parse(name, v)
            continue
        if name in keys:
            fixtures[keys[name]] = Fixture.parse(v, name)
            continue
        idx = next((i for i, p in enumerate(parts) if p.name == name), None)
        amp = parameter_of_symbol(name)
        if idx is None and amp is not None:
            param, pname = amp
            idx = next((i for i, p in enumerate(parts) if p.name == pname and p.kind == "opamp"), None)
            if idx is None:
                raise CircuitError(name, "no op-amp of that name", "name an op-amp's A_, GBW_, P2_, Rout_, Rin_ or Cin_ symbol")
            new = Fixture.parse(v, name) if param.optional else _value(v, name)
            parts[idx] = replace(parts[idx], **{param.key: new})
            parts[idx].check_values()
            continue
        if idx is None:
            raise CircuitError(name, "no such part or symbol", "use one of " + ", ".join(circuit.symbols()))
        parts[idx] = replace(parts[idx], value=_value(v, f"part {name}"), tie=None)
        parts[idx].check_values()
    return replace(circuit, parts=tuple(parts), parameters=tuple(params.values()), **fixtures)


def _value(text, where: str):
    return None if text is None else parse_value(text, where=where)
