"""Unit parsing at the edges: every spelling people and instruments use."""

import re

import pytest

from rheofit import units
from rheofit.errors import ParameterError, UnitError
from rheofit.units import is_unit_of, parse_quantity, parse_tolerance, parse_typed, to_si

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
        (3, "length", 3.0),  # a number (not text) is SI already
        ("0,5 mm", "length", 5e-4),  # a decimal comma, read as such
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


# --- typed quantities: a unit is required, and the value must be one a channel can have ------------

@pytest.mark.parametrize("text, words", [
    ("0.5", "has no unit; give a number and a unit of length (mm or um), e.g. '0.5 mm'"),
    ("5 Pa", "unit 'Pa' is not a unit of length"),
    ("nan mm", "is not a finite number"),
    ("inf mm", "is not a finite number"),
    ("1e400 mm", "is too large to compute with"),
    ("1e306 km", "is too large to compute with"),  # finite as typed, overflows in metres
    ("-5 mm", "is negative"),
    ("0 mm", "is zero"),
    ("1,500 mm", "could be 1.500 (a decimal comma) or 1500 (a thousands separator)"),
    ("1,000.5 mm", "thousands separator"),
    ("half a mm", "Cannot read --diameter 'half a mm' as a length"),
])
def test_parse_typed_refuses_in_one_sentence_naming_the_option(text, words):
    with pytest.raises(UnitError) as caught:
        parse_typed(text, "length", "--diameter")
    message = str(caught.value)
    assert words in message and "--diameter" in message and message.endswith(".")


@pytest.mark.parametrize("text, expected", [
    ("0,5 mm", 5e-4), ("0,500 mm", 5e-4), ("2,5e-1 mm", 2.5e-4), ("0.5mm", 5e-4), ("+1 cm", 0.01),
])
def test_parse_typed_reads_decimal_commas_and_signs(text, expected):
    assert parse_typed(text, "length", "--diameter") == pytest.approx(expected, rel=1e-12)


def test_python_text_without_a_unit_is_refused_but_numbers_are_si():
    from rheofit.flow import Tube

    with pytest.raises(UnitError, match=r"^Tube diameter '0.5' has no unit"):
        Tube("0.5", "10 cm")
    assert Tube(0.5e-3, "10 cm").diameter == 5e-4


@pytest.mark.parametrize("text, expected", [
    ("10%", 0.10), ("10 %", 0.10), ("0.1", 0.10), (0.1, 0.10), ("2,5 %", 0.025), ("150%", 1.5),
])
def test_tolerance_as_percentage_or_fraction(text, expected):
    # 1 % = 0.01 (BIPM SI Brochure, 9th ed. (2019), sec. 5.4.7; section from memory)
    assert parse_tolerance(text) == pytest.approx(expected, rel=1e-12)


@pytest.mark.parametrize("text, words", [
    ("10", "ambiguous (as a fraction it means 1000 %); write '10%'"),
    (10, "ambiguous"),
    ("1", "ambiguous (as a fraction it means 100 %)"),
    ("10%%", "is not a positive fraction or percentage"),
    ("-5%", "is not a positive"),
    ("nan", "is not a positive"),
    ("inf%", "is not a positive"),
])
def test_tolerance_that_could_be_misread_is_refused(text, words):
    with pytest.raises(ParameterError, match=re.escape(words)):
        parse_tolerance(text, "--tolerance")
# --- the own table of common units against pint ----------------------------------------

def _pint_si(text, kind):
    """(scale, offset) of ``text`` to the SI unit of ``kind``, straight from pint."""
    import pint

    ureg = pint.UnitRegistry(autoconvert_offset_to_baseunit=True)
    target = ureg.Unit(units.SI_UNITS[kind]) if units.SI_UNITS[kind] else ureg.dimensionless
    zero = ureg.Quantity(0.0, ureg.Unit(text)).to(target).magnitude
    return ureg.Quantity(1.0, ureg.Unit(text)).to(target).magnitude - zero, zero


def _kind_of(dims):
    return next(k for k, d in units._DIMENSIONS.items() if d == dims)


TABLE_TEXTS = sorted(
    list(units._UNITS) + list(units._OFFSET_UNITS)
    + [p + s for s in units._PREFIXABLE for p in units._PREFIXES]
    + ["1/s", "mPa*s", "Pa s", "uL/min", "mL/h", "kg/m**3", "g/mL", "m**3/s", "mm/s",
       "dyn/cm**2", "N/m**2", "kg/m^3", "1/min", "kg/m s", "Pa/s*m"]
)


@pytest.mark.parametrize("text", TABLE_TEXTS)
def test_table_unit_agrees_with_pint(text):
    # pint (an independent unit library) is the reference for every entry the table reads
    found = units._table_unit(text)
    assert found is not None
    scale, dims, offset = found
    if dims not in units._DIMENSIONS.values():  # e.g. a mass or a time alone: compare in base units
        import pint

        ureg = pint.UnitRegistry()
        assert scale == pytest.approx(ureg.Quantity(1.0, text).to_base_units().magnitude, rel=1e-14)
        return
    ref_scale, ref_offset = _pint_si(text, _kind_of(dims))
    # pint's degF scale carries its own rounding (255.92... - 255.37...), hence 1e-12 there
    assert scale == pytest.approx(ref_scale, rel=1e-12 if offset else 1e-14)
    assert offset == pytest.approx(ref_offset, rel=1e-14)


def test_plain_words_are_no_unit_for_pint_either():
    import pint

    ureg = pint.UnitRegistry()
    for word in units._PLAIN_WORDS:
        with pytest.raises(pint.UndefinedUnitError):
            ureg.Unit(word)


def test_reading_a_sample_sweep_loads_no_unit_library():
    import subprocess
    import sys

    code = ("import sys; from rheofit.ingest import read_flow_curve; from rheofit.jobs.demo import sample_curves; "
            "sample_curves(); print('pint' in sys.modules)")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True, check=True)
    assert done.stdout.strip() == "False"
