"""Property tests: invented flow curves written in every supported dialect read back unchanged.

Dialect = delimiter x decimal mark x encoding x unit spelling x units in the
header or in a row of their own (in brackets, parentheses or bare) x line ends.  Numbers are written with repr
precision, so they must come back to rtol 1e-9 after the unit conversion.
Conversion factors: 1 cP = 1 mPa s = 1e-3 Pa s, 1 P = 0.1 Pa s (BIPM SI
Brochure, 9th ed. (2019), Table 8); 1 kPa = 1e3 Pa (SI prefix kilo, SI
Brochure 2019, Table 7).
"""

from __future__ import annotations

import numpy as np
import pytest
from hypothesis import HealthCheck, assume, given, settings
from hypothesis import strategies as st

from rheofit.ingest import read_flow_curve, read_flow_curves

VISCOSITY = [("Pa·s", 1.0), ("Pa s", 1.0), ("Pa.s", 1.0), ("mPa·s", 1e-3), ("mPas", 1e-3), ("mPa s", 1e-3), ("cP", 1e-3), ("P", 0.1)]
SHEAR_RATE = [("1/s", 1.0), ("s-1", 1.0), ("s⁻¹", 1.0), ("s^-1", 1.0)]
STRESS = [("Pa", 1.0), ("kPa", 1e3), ("mPa", 1e-3)]
DELIMITERS = [",", ";", "\t", "   "]
ENCODINGS = ["utf-8", "utf-8-sig", "utf-16", "cp1252"]

positive = st.floats(min_value=1e-4, max_value=1e5, allow_nan=False, allow_infinity=False)


@st.composite
def sweeps(draw):
    n = draw(st.integers(min_value=3, max_value=25))
    rates = draw(st.lists(positive, min_size=n, max_size=n))
    values = draw(st.lists(positive, min_size=n, max_size=n))
    return np.array(rates), np.array(values)


def cell(value: float, decimal: str) -> str:
    text = repr(float(value))
    return text.replace(".", ",") if decimal == "," else text


def render(rates, values, quantity, rate_unit, value_unit, delimiter, decimal, units_row, brackets, preamble) -> str:
    names = ["Shear rate", "Viscosity" if quantity == "viscosity" else "Shear stress"]
    units = [brackets.format(rate_unit), brackets.format(value_unit)]
    if units_row:
        lines = [delimiter.join(names), delimiter.join(units)]
    else:
        lines = [delimiter.join(f"{n} {u}" for n, u in zip(names, units))]
    lines += [delimiter.join((cell(g, decimal), cell(v, decimal))) for g, v in zip(rates, values)]
    return "".join(f"Note: {k}\n" for k in range(preamble)) + "\n".join(lines) + "\n"


@settings(max_examples=150, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(
    sweep=sweeps(),
    quantity=st.sampled_from(["viscosity", "stress"]),
    rate_unit=st.sampled_from(SHEAR_RATE),
    viscosity_unit=st.sampled_from(VISCOSITY),
    stress_unit=st.sampled_from(STRESS),
    delimiter=st.sampled_from(DELIMITERS),
    decimal=st.sampled_from([".", ","]),
    encoding=st.sampled_from(ENCODINGS),
    units_row=st.booleans(),
    brackets=st.sampled_from(["[{}]", "({})", "{}"]),
    crlf=st.booleans(),
    preamble=st.integers(min_value=0, max_value=3),
)
def test_round_trip(tmp_path, sweep, quantity, rate_unit, viscosity_unit, stress_unit, delimiter, decimal,
                    encoding, units_row, brackets, crlf, preamble):
    assume(not (delimiter == "," and decimal == ","))  # ambiguous unless quoted
    value_unit = viscosity_unit if quantity == "viscosity" else stress_unit
    text = render(*sweep, quantity, rate_unit[0], value_unit[0], delimiter, decimal, units_row, brackets, preamble)
    try:
        data = text.replace("\n", "\r\n" if crlf else "\n").encode(encoding)
    except UnicodeEncodeError:  # e.g. s⁻¹ has no cp1252 byte
        assume(False)
    path = tmp_path / "sweep.txt"
    path.write_bytes(data)

    curve = read_flow_curve(path)

    rates, values = sweep
    expected_rate = rates * rate_unit[1]
    np.testing.assert_allclose(curve.shear_rate, expected_rate, rtol=1e-9)
    if quantity == "viscosity":
        eta = values * value_unit[1]
        np.testing.assert_allclose(curve.viscosity, eta, rtol=1e-9)
        np.testing.assert_allclose(curve.stress, eta * expected_rate, rtol=1e-9)  # tau = eta * rate
    else:
        tau = values * value_unit[1]
        np.testing.assert_allclose(curve.stress, tau, rtol=1e-9)
        np.testing.assert_allclose(curve.viscosity, tau / expected_rate, rtol=1e-9)  # eta = tau / rate
    assert not [f for f in curve.flags if f.code in ("assumed_unit", "missing_values", "nonpositive_shear_rate")]
    assert curve.metadata["lines"] == [f"Note: {k}" for k in range(preamble)]
    assert path.read_bytes() == data


@settings(max_examples=40, deadline=None, suppress_health_check=[HealthCheck.function_scoped_fixture])
@given(sweep=sweeps(), temperatures=st.lists(st.integers(min_value=5, max_value=80), min_size=1, max_size=4, unique=True),
       delimiter=st.sampled_from(DELIMITERS))
def test_one_curve_per_temperature(tmp_path, sweep, temperatures, delimiter):
    rates, values = sweep
    rows = [delimiter.join((repr(float(g)), repr(float(v)), str(t))) for t in temperatures for g, v in zip(rates, values)]
    text = delimiter.join(("Shear rate [1/s]", "Viscosity [Pa s]", "Temperature [°C]")) + "\n" + "\n".join(rows) + "\n"
    path = tmp_path / "temps.txt"
    path.write_text(text, encoding="utf-8")
    curves = read_flow_curves(path)
    assert len(curves) == len(temperatures)
    for curve, t in zip(curves, temperatures):
        assert curve.temperature == pytest.approx(t + 273.15, rel=1e-12)  # SI Brochure (2019), sec. 2.3.1
        np.testing.assert_allclose(curve.viscosity, values, rtol=1e-12)
        np.testing.assert_allclose(curve.shear_rate, rates, rtol=1e-12)
