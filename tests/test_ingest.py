"""Basic import cases: unit spellings, stress-only / viscosity-only files, overrides.

Expected SI numbers are worked out by hand beside each case.  Unit facts:
# Source: BIPM, The International System of Units (SI Brochure), 9th ed. (2019),
# Table 8 (non-SI units): the poise is the CGS unit of dynamic viscosity,
# 1 P = 1 dyn s cm^-2 = 1 g cm^-1 s^-1 = 0.1 Pa s, hence 1 cP = 1 mPa s.
"""

from __future__ import annotations

import hashlib
import os

import numpy as np
import pytest

from rheofit.errors import InputFileError, ParameterError, UnitError
from rheofit.ingest import read_flow_curve, read_flow_curves, sorted_by_shear_rate
from rheofit.units import to_si

RATES = [1.0, 10.0, 100.0]
VALUES = [250.0, 120.0, 60.0]

# (spelling, Pa s per unit); the factors follow the SI Brochure (2019), Table 8, as above
VISCOSITY_UNITS = [
    ("cP", 1e-3), ("mPa·s", 1e-3), ("mPas", 1e-3), ("mPa s", 1e-3), ("mPa.s", 1e-3),
    ("P", 0.1), ("Pa·s", 1.0), ("Pa s", 1.0), ("Pa.s", 1.0), ("Pas", 1.0),
]
SHEAR_RATE_UNITS = ["1/s", "s-1", "s⁻¹", "s^-1", "1/sec"]  # all the reciprocal second (SI Brochure 2019, Table 4)


def write(folder, name: str, text: str, encoding: str = "utf-8"):
    path = folder / name
    path.write_bytes(text.encode(encoding))
    return path


def table(header: str, rows, delimiter: str = ",") -> str:
    return header + "\n" + "\n".join(delimiter.join(str(v) for v in row) for row in rows) + "\n"


def test_poise_is_a_tenth_of_a_pascal_second():
    # Source: BIPM SI Brochure, 9th ed. (2019), Table 8: 1 P = 1 g cm^-1 s^-1 = 0.1 Pa s
    gram_per_cm_s = 1e-3 / 1e-2  # 1 g / (1 cm * 1 s) in kg m^-1 s^-1
    assert to_si(1.0, "P", "viscosity") == pytest.approx(gram_per_cm_s, rel=1e-12)
    assert to_si(1.0, "cP", "viscosity") == pytest.approx(to_si(1.0, "mPa s", "viscosity"), rel=1e-12)


@pytest.mark.parametrize("unit,factor", VISCOSITY_UNITS)
@pytest.mark.parametrize("brackets", ["[]", "()"])
def test_viscosity_unit_spellings(tmp_path, unit, factor, brackets):
    header = f"Shear rate {brackets[0]}1/s{brackets[1]},Viscosity {brackets[0]}{unit}{brackets[1]}"
    path = write(tmp_path, "sweep.csv", table(header, zip(RATES, VALUES)))
    curve = read_flow_curve(path)
    expected = np.array(VALUES) * factor  # e.g. 250 cP = 0.25 Pa s
    np.testing.assert_allclose(curve.viscosity, expected, rtol=1e-12)
    np.testing.assert_allclose(curve.stress, expected * np.array(RATES), rtol=1e-12)  # tau = eta * rate
    np.testing.assert_allclose(curve.shear_rate, RATES, rtol=1e-12)
    assert not [f for f in curve.flags if f.code == "assumed_unit"]


def test_worked_example_in_centipoise(tmp_path):
    # 250 cP at 1/s -> 0.250 Pa s and 0.250 Pa; 60 cP at 100/s -> 0.060 Pa s and 6.0 Pa (by hand)
    path = write(tmp_path, "water_like.csv", table("Shear rate [1/s],Viscosity [cP]", zip(RATES, VALUES)))
    curve = read_flow_curve(path)
    assert curve.viscosity.tolist() == pytest.approx([0.250, 0.120, 0.060], rel=1e-12)
    assert curve.stress.tolist() == pytest.approx([0.250, 1.20, 6.0], rel=1e-12)


@pytest.mark.parametrize("unit", SHEAR_RATE_UNITS)
def test_shear_rate_unit_spellings(tmp_path, unit):
    path = write(tmp_path, "sweep.csv", table(f"Shear rate [{unit}],Viscosity [Pa s]", zip(RATES, VALUES)))
    curve = read_flow_curve(path)
    np.testing.assert_allclose(curve.shear_rate, RATES, rtol=1e-12)


@pytest.mark.parametrize("unit,factor", [("Pa", 1.0), ("kPa", 1e3), ("mPa", 1e-3)])
def test_stress_only(tmp_path, unit, factor):
    stresses = [0.5, 2.0, 9.0]
    path = write(tmp_path, "stress.csv", table(f"Shear rate (1/s);Shear stress ({unit})", zip(RATES, stresses), ";"))
    curve = read_flow_curve(path)
    tau = np.array(stresses) * factor
    np.testing.assert_allclose(curve.stress, tau, rtol=1e-12)
    np.testing.assert_allclose(curve.viscosity, tau / np.array(RATES), rtol=1e-12)  # eta = tau / rate


def test_viscosity_only(tmp_path):
    path = write(tmp_path, "eta.csv", table("gamma dot [1/s],eta [mPa s]", zip(RATES, VALUES)))
    curve = read_flow_curve(path)
    np.testing.assert_allclose(curve.stress, [0.25, 1.2, 6.0], rtol=1e-12)  # 250 mPa s * 1/s = 0.25 Pa, ...


def test_symbols_any_order_and_case(tmp_path):
    text = table("τ [Pa];T [°C];γ̇ [s⁻¹];η [Pa·s];No.", [[0.5, 25, 1, 0.5, 1], [3, 25, 10, 0.3, 2], [20, 25, 100, 0.2, 3]], ";")
    curve = read_flow_curve(write(tmp_path, "symbols.csv", text))
    np.testing.assert_allclose(curve.shear_rate, RATES)
    np.testing.assert_allclose(curve.viscosity, [0.5, 0.3, 0.2])
    np.testing.assert_allclose(curve.stress, [0.5, 3.0, 20.0])
    assert curve.temperature == pytest.approx(298.15)  # T/K = t/°C + 273.15 (SI Brochure 2019, sec. 2.3.1)
    assert curve.metadata["import"]["ignored_columns"] == ["No."]


def test_both_given_and_consistent_gives_no_flag(tmp_path):
    rows = [(g, e, g * e) for g, e in zip(RATES, [0.25, 0.12, 0.06])]
    curve = read_flow_curve(write(tmp_path, "both.csv", table("Shear rate [1/s],Viscosity [Pa s],Shear stress [Pa]", rows)))
    assert [f.code for f in curve.flags] == []


def test_both_given_and_inconsistent_is_flagged_at_the_worst_line(tmp_path):
    rows = [(1, 0.25, 0.25), (10, 0.12, 1.2), (100, 0.06, 6.6)]  # last: 6.6 vs 0.06*100 = 6.0, 10 % off
    curve = read_flow_curve(write(tmp_path, "both.csv", table("Shear rate [1/s],Viscosity [Pa s],Shear stress [Pa]", rows)))
    (flag,) = [f for f in curve.flags if f.code == "stress_viscosity_mismatch"]
    assert flag.data["line"] == 4
    assert flag.data["max_relative_difference"] == pytest.approx(0.1, rel=1e-9)
    assert "line 4" in flag.message
    np.testing.assert_allclose(curve.stress, [0.25, 1.2, 6.6])  # used as given
    np.testing.assert_allclose(curve.viscosity, [0.25, 0.12, 0.06])


def test_unit_mix_up_between_stress_and_viscosity_is_pointed_out(tmp_path):
    rows = [(1, 250, 0.25), (10, 120, 1.2), (100, 60, 6.0)]  # viscosity really in mPa s
    curve = read_flow_curve(write(tmp_path, "mixup.csv", table("Shear rate [1/s],Viscosity [Pa s],Shear stress [Pa]", rows)))
    (flag,) = [f for f in curve.flags if f.code == "stress_viscosity_mismatch"]
    assert "10^-3" in flag.message


def test_missing_viscosity_unit_is_assumed_si_and_flagged(tmp_path):
    curve = read_flow_curve(write(tmp_path, "bare.csv", table("Shear rate,Viscosity", zip(RATES, VALUES))))
    np.testing.assert_allclose(curve.viscosity, VALUES)  # read as Pa s
    flags = {f.data["role"]: f for f in curve.flags if f.code == "assumed_unit"}
    assert set(flags) == {"shear_rate", "viscosity"}
    assert "Pa·s" in flags["viscosity"].message and "viscosity_unit=" in flags["viscosity"].message


def test_unitless_temperature_column_is_read_in_celsius_and_flagged(tmp_path):
    text = table("Shear rate [1/s],Viscosity [Pa s],Temperature", [(1, 2, 37), (10, 1, 37), (100, 0.5, 37)])
    curve = read_flow_curve(write(tmp_path, "t.csv", text))
    assert curve.temperature == pytest.approx(310.15)  # SI Brochure 2019, sec. 2.3.1
    assert any(f.code == "assumed_unit" and f.data["role"] == "temperature" for f in curve.flags)


def test_overrides_by_name_and_unit(tmp_path):
    text = table("A,B,C", [(1, 1, 250), (2, 10, 120), (3, 100, 60)])
    path = write(tmp_path, "odd.csv", text)
    curve = read_flow_curve(path, shear_rate_column="B", viscosity_column="c", shear_rate_unit="1/s", viscosity_unit="cP")
    np.testing.assert_allclose(curve.shear_rate, RATES)
    np.testing.assert_allclose(curve.viscosity, [0.25, 0.12, 0.06])
    assert not [f for f in curve.flags if f.code == "assumed_unit"]


def test_overrides_by_column_number_counted_from_one(tmp_path):
    path = write(tmp_path, "bare.txt", table("", [(1, 250), (10, 120), (100, 60)]).lstrip("\n"))
    curve = read_flow_curve(path, shear_rate_column=1, viscosity_column=2, viscosity_unit="mPa*s")
    np.testing.assert_allclose(curve.viscosity, [0.25, 0.12, 0.06])


def test_unit_override_replaces_the_file_unit_and_is_flagged(tmp_path):
    path = write(tmp_path, "sweep.csv", table("Shear rate [1/s],Viscosity [Pa s]", zip(RATES, VALUES)))
    curve = read_flow_curve(path, viscosity_unit="mPa·s")
    np.testing.assert_allclose(curve.viscosity, [0.25, 0.12, 0.06])
    assert [f.code for f in curve.flags] == ["unit_override"]


def test_name_and_source(tmp_path):
    path = write(tmp_path, "lot_42.csv", table("Shear rate [1/s],Viscosity [Pa s]", zip(RATES, VALUES)))
    assert read_flow_curve(path).name == "lot_42"
    assert read_flow_curve(path).source == str(path)
    assert read_flow_curve(path, name="gel").name == "gel"


def test_file_is_byte_identical_after_reading(tmp_path):
    path = write(tmp_path, "keep.csv", "Sample: x\r\n" + table("Shear rate [1/s];Viscosity [mPa·s]", zip(RATES, VALUES), ";"), "cp1252")
    before = hashlib.sha256(path.read_bytes()).hexdigest()
    stamp = os.stat(path).st_mtime_ns
    read_flow_curves(path)
    read_flow_curve(path)
    assert hashlib.sha256(path.read_bytes()).hexdigest() == before
    assert os.stat(path).st_mtime_ns == stamp


def test_sorted_view_keeps_the_measured_curve(tmp_path):
    path = write(tmp_path, "down.csv", table("Shear rate [1/s],Viscosity [Pa s]", [(100, 1), (10, 2), (1, 4)]))
    curve = read_flow_curve(path)
    assert curve.shear_rate.tolist() == [100, 10, 1]  # measured order kept
    view = sorted_by_shear_rate(curve)
    assert view.shear_rate.tolist() == [1, 10, 100]
    assert view.viscosity.tolist() == [4, 2, 1]
    assert curve.shear_rate.tolist() == [100, 10, 1]


# --- picking one curve ----------------------------------------------------------------

def _three_temperatures(tmp_path):
    rows = [(g, e, t) for t in (20, 25, 37) for g, e in zip(RATES, VALUES)]
    return write(tmp_path, "x.csv", table("Shear rate [1/s],Viscosity [mPa s],Temperature [°C]", rows))


def test_several_curves_need_a_choice(tmp_path):
    path = _three_temperatures(tmp_path)
    with pytest.raises(InputFileError) as info:
        read_flow_curve(path)
    message = str(info.value)
    assert "x.csv" in message and "3 curves" in message
    assert "20 °C" in message and "25 °C" in message and "37 °C" in message
    assert "read_flow_curves()" in message and "curve=" in message


@pytest.mark.parametrize("choice,kelvin", [(2, 298.15), ("37 °C", 310.15), ("20", 293.15), ("2", 298.15)])
def test_pick_a_curve_by_number_or_label(tmp_path, choice, kelvin):
    assert read_flow_curve(_three_temperatures(tmp_path), curve=choice).temperature == pytest.approx(kelvin)


@pytest.mark.parametrize("choice", [0, 4, "50 °C", True])
def test_unknown_curve_choice(tmp_path, choice):
    with pytest.raises(InputFileError, match=r"x\.csv.*no curve.*numbered from 1"):
        read_flow_curve(_three_temperatures(tmp_path), curve=choice)


# --- overrides and units that cannot work -------------------------------------------------

def test_override_naming_no_column(tmp_path):
    path = write(tmp_path, "s.csv", table("Shear rate [1/s],Viscosity [Pa s]", zip(RATES, VALUES)))
    with pytest.raises(InputFileError, match=r"s\.csv' has no column named 'Visc' \(asked for with viscosity_column=Visc\).*'Shear rate \[1/s\]'"):
        read_flow_curve(path, viscosity_column="Visc")


@pytest.mark.parametrize("number", [0, 3])
def test_override_column_number_out_of_range(tmp_path, number):
    path = write(tmp_path, "s.csv", table("Shear rate [1/s],Viscosity [Pa s]", zip(RATES, VALUES)))
    with pytest.raises(InputFileError, match=rf"has 2 columns, so viscosity_column={number} does not exist; columns are counted from 1"):
        read_flow_curve(path, viscosity_column=number)


def test_unknown_unit_in_an_override(tmp_path):
    path = write(tmp_path, "s.csv", table("Shear rate [1/s],Viscosity", zip(RATES, VALUES)))
    with pytest.raises(UnitError, match=r"s\.csv', viscosity_unit='blorp': unknown unit 'blorp'.*viscosity_unit="):
        read_flow_curve(path, viscosity_unit="blorp")


def test_rotational_speed_is_not_a_shear_rate(tmp_path):
    path = write(tmp_path, "speed.csv", table("Speed [rpm],Viscosity [Pa s]", zip(RATES, VALUES)))
    with pytest.raises(UnitError, match=r"speed\.csv', column 'Speed \[rpm\]'.*rotational speed"):
        read_flow_curve(path, shear_rate_column="Speed")
    with pytest.raises(UnitError, match="rotational speed or frequency"):
        to_si(1.0, "rad/s", "shear_rate")


def test_two_candidate_columns_must_be_told_apart(tmp_path):
    text = table("Shear rate [1/s],Shear rate [1/s],Viscosity [Pa s]", [(1, 1, 1), (10, 10, 1), (100, 100, 1)])
    with pytest.raises(InputFileError, match=r"columns 'Shear rate \[1/s\]' and 'Shear rate \[1/s\]' all look like shear rate; pick one with shear_rate_column="):
        read_flow_curve(write(tmp_path, "twice.csv", text))


def test_set_point_column_loses_to_the_measured_one(tmp_path):
    text = table("Shear rate set [1/s],Shear rate [1/s],Viscosity [Pa s]", [(1, 1.1, 1), (10, 10.2, 1), (100, 99, 1)])
    curve = read_flow_curve(write(tmp_path, "set.csv", text))
    np.testing.assert_allclose(curve.shear_rate, [1.1, 10.2, 99])


# --- header words, symbols and unit placements ----------------------------------------------

@pytest.mark.parametrize(
    "rate_header,value_header,factor,role",
    [
        ("Shear rate [1/s]", "Viscosity [Pa s]", 1.0, "viscosity"),
        ("SHEAR RATE (1/S)", "VISCOSITY (CP)", 1e-3, "viscosity"),  # all capitals
        ("Rate [s-1]", "Visc. [mPa.s]", 1e-3, "viscosity"),
        ("gamma_dot [1/s]", "eta [Pa.s]", 1.0, "viscosity"),
        ("γ̇ [s⁻¹]", "η [mPa·s]", 1e-3, "viscosity"),
        ("γ [1/s]", "Apparent viscosity [cP]", 1e-3, "viscosity"),
        ("SR [1/s]", "Dynamic viscosity [P]", 0.1, "viscosity"),
        ("D [1/s]", "μ [Pa s]", 1.0, "viscosity"),
        ("Shear rate / s-1", "η / mPa s", 1e-3, "viscosity"),  # quantity / unit
        ("Shear rate, 1/s", "Viscosity, cP", 1e-3, "viscosity"),
        ("Shear rate in 1/s", "Viscosity in Pa.s", 1.0, "viscosity"),
        ("Shear rate 1/s", "Viscosity mPas", 1e-3, "viscosity"),  # unit as the last word
        ("Shear rate {1/s}", "Viscosity (apparent) [mPa s]", 1e-3, "viscosity"),
        ("Strain rate [1/s]", "Shear stress [kPa]", 1e3, "stress"),
        ("Rate [1/s]", "tau [Pa]", 1.0, "stress"),
        ("Shear Rate [1/s]", "σ [mPa]", 1e-3, "stress"),
        ("Shear rate [1/s]", "Stress [dyn/cm²]", 0.1, "stress"),  # 1 dyn/cm² = 0.1 Pa (SI Brochure 2019, Table 8)
        ("Value 1 [1/s]", "Value 2 [mPa·s]", 1e-3, "viscosity"),  # recognised by the unit alone
    ],
)
def test_header_words_and_unit_placements(tmp_path, rate_header, value_header, factor, role):
    text = f"{rate_header};{value_header}\n1;5\n10;4\n100;3\n"
    curve = read_flow_curve(write(tmp_path, "h.csv", text))
    np.testing.assert_allclose(curve.shear_rate, RATES)
    np.testing.assert_allclose(getattr(curve, role), np.array([5.0, 4.0, 3.0]) * factor, rtol=1e-12)
    assert not [f for f in curve.flags if f.code == "assumed_unit"]


@pytest.mark.parametrize(
    "extra",
    ["Time [s]", "t [s]", "Normal stress [Pa]", "Torque [mN m]", "Complex viscosity [Pa s]", "|η*| [Pa s]",
     "Speed [rpm]", "Frequency [Hz]", "Kinematic viscosity [mm²/s]", "Status"],
)
def test_other_columns_are_ignored(tmp_path, extra):
    text = f"Shear rate [1/s];{extra};Viscosity [Pa s]\n1;7;5\n10;7;4\n100;ok;3\n"
    curve = read_flow_curve(write(tmp_path, "extra.csv", text))
    np.testing.assert_allclose(curve.viscosity, [5, 4, 3])
    assert curve.metadata["import"]["ignored_columns"] == [extra]


def test_temperature_in_kelvin_and_time_column(tmp_path):
    text = "t [s];T [K];Shear rate [1/s];Viscosity [Pa s]\n0;310.15;1;5\n10;310.15;10;4\n20;310.15;100;3\n"
    curve = read_flow_curve(write(tmp_path, "tk.csv", text))
    assert curve.temperature == pytest.approx(310.15)
    assert curve.metadata["import"]["ignored_columns"] == ["t [s]"]


def test_pipe_delimiter(tmp_path):
    curve = read_flow_curve(write(tmp_path, "pipe.txt", "Shear rate [1/s]|Viscosity [Pa s]\n1|5\n10|4\n100|3\n"))
    np.testing.assert_allclose(curve.viscosity, [5, 4, 3])
    assert curve.metadata["import"]["delimiter"] == "pipe"


def test_whitespace_header_with_single_spaces(tmp_path):
    curve = read_flow_curve(write(tmp_path, "ws.txt", "Rate Viscosity\n1 5\n10 4\n100 3\n"), viscosity_unit="cP")
    np.testing.assert_allclose(curve.viscosity, [0.005, 0.004, 0.003])


def test_unit_override_rescues_an_unreadable_file_unit(tmp_path):
    path = write(tmp_path, "sweep.csv", table("Shear rate [1/s],Viscosity [centi-whatever]", zip(RATES, VALUES)))
    curve = read_flow_curve(path, viscosity_unit="cP")
    np.testing.assert_allclose(curve.viscosity, [0.25, 0.12, 0.06])
    assert [f.code for f in curve.flags] == ["unit_override"]


def test_unit_in_brackets_without_a_name(tmp_path):
    curve = read_flow_curve(write(tmp_path, "bare_units.csv", table("[1/s];[mPa s]", zip(RATES, VALUES), ";")))
    np.testing.assert_allclose(curve.viscosity, [0.25, 0.12, 0.06])


def test_one_segment_of_an_up_and_down_sweep(tmp_path):
    """Synthetic up-and-down sweep: 2.0 Pa s going up, 1.6 Pa s coming down (a 20 % loop)."""
    rates = [1, 3, 10, 30, 100, 300, 1000]
    path = tmp_path / "loop.csv"
    path.write_text("Shear rate [1/s],Viscosity [Pa s]\n" + "".join(f"{g},2.0\n" for g in rates)
                    + "".join(f"{g},1.6\n" for g in reversed(rates)), encoding="utf-8")
    both, = read_flow_curves(path)
    assert len(both) == 14
    loop = next(f for f in both.flags if f.code == "hysteresis")
    assert "segment='up' or 'down'" in loop.message  # from Python the keyword is named
    down, = read_flow_curves(path, segment="down")
    assert len(down) == 7 and set(down.viscosity) == {1.6} and set(down.shear_rate) == set(rates)
    assert [f.code for f in down.flags][-1] == "segment_kept"
    assert "only the down segment was kept" in next(f for f in down.flags if f.code == "hysteresis").message
    with pytest.raises(ParameterError, match=r"^Unknown segment 'sideways'; choose one of: all, up, down\.$"):
        read_flow_curves(path, segment="sideways")
    path.write_text("Shear rate [1/s],Viscosity [Pa s]\n" + "".join(f"{g},2.0\n" for g in rates), encoding="utf-8")
    up, = read_flow_curves(path, segment="up")  # an ascending sweep is all "up": nothing to flag
    assert len(up) == 7 and "segment_kept" not in [f.code for f in up.flags]
    with pytest.raises(InputFileError, match=r"\(loop: ascending\) has 0 points in down segments; .* choose "
                                             r"segment='up' or 'all'\.$"):
        read_flow_curves(path, segment="down")
