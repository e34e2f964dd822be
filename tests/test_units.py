"""Unit parsing at the edges: every spelling people and instruments use."""

import pytest

from rheofit.errors import ParameterError, UnitError
from rheofit.units import is_unit_of, parse_quantity, parse_tolerance, to_si

# Source: BIPM, The International System of Units (SI Brochure), 9th ed. (2019),
# Table 8 (non-SI units): 1 P = 1 dyn s cm^-2 = 0.1 Pa s; hence 1 cP = 1 mPa s.
VISCOSITY_SPELLINGS = [
    ("Pa·s", 1.0), ("Pa s", 1.0), ("Pa.s", 1.0), ("Pa*s", 1.0), ("Pas", 1.0),
    ("mPa·s", 1e-3), ("mPa s", 1e-3), ("mPas", 1e-3), ("mPa.s", 1e-3),
    ("cP", 1e-3), ("cp", 1e-3), ("cps", 1e-3), ("P", 0.1), ("poise", 0.1),
]


@pytest.mark.parametrize("unit,factor", VISCOSITY_SPELLINGS)
def test_viscosity_units(unit, factor):
    assert to_si(2.5, unit, "viscosity") == pytest.approx(2.5 * factor, rel=1e-12)


@pytest.mark.parametrize("unit", ["1/s", "s-1", "s^-1", "s⁻¹", "1/sec", "[1/s]", "(s-1)"])
def test_shear_rate_units(unit):
    assert to_si(7.0, unit, "shear_rate") == pytest.approx(7.0, rel=1e-12)


@pytest.mark.parametrize(
    "text,kind,expected",
    [
        ("0.5 mm", "length", 5e-4),
        ("200 um", "length", 2e-4),
        ("200 µm", "length", 2e-4),
        ("10 uL/min", "flow_rate", 10e-9 / 60),  # 1 L = 1e-3 m^3 (SI Brochure 2019, Table 8)
        ("1.2 mL/h", "flow_rate", 1.2e-6 / 3600),
        ("25 kPa", "pressure", 25e3),
        ("2 bar", "pressure", 2e5),  # 1 bar = 1e5 Pa (SI Brochure 2019, Table 8)
        ("1.05 g/mL", "density", 1050.0),
        ("37 °C", "temperature", 310.15),  # T/K = t/°C + 273.15 (SI Brochure 2019, 2.3.1)
        ("3", "length", 3.0),
    ],
)
def test_parse_quantity(text, kind, expected):
    assert parse_quantity(text, kind) == pytest.approx(expected, rel=1e-12)


def test_psi_to_pascal():
    # Source: NIST SP 811 (2008), Appendix B.8: 1 psi = 6.894757e3 Pa
    assert parse_quantity("1 psi", "pressure") == pytest.approx(6894.757, rel=1e-6)


def test_unknown_unit_is_named():
    with pytest.raises(UnitError, match="'furlongs'"):
        to_si(1.0, "furlongs", "viscosity")


def test_wrong_kind_is_named():
    with pytest.raises(UnitError, match="not a unit of viscosity"):
        to_si(1.0, "Pa", "viscosity")


def test_unknown_kind():
    with pytest.raises(UnitError, match="quantity kind"):
        to_si(1.0, "Pa", "colour")


def test_unreadable_quantity_gives_example():
    with pytest.raises(UnitError, match="e.g. '1 mm'"):
        parse_quantity("half a millimetre", "length")


def test_is_unit_of():
    assert is_unit_of("cP", "viscosity")
    assert not is_unit_of("cP", "stress")


def test_parse_tolerance_directly():
    # 1 % = 0.01 (BIPM SI Brochure, 9th ed. (2019), sec. 5.4.7; section from memory)
    assert parse_tolerance("2.5 %") == pytest.approx(0.025)
    with pytest.raises(ParameterError, match="positive fraction"):
        parse_tolerance("0")
