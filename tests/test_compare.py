"""Lot comparison: verdicts, the same-curve F test, the table, output forms and every error path.

The lots below are invented sweeps (fixed seeds) for synthetic-recovery checks only.
"""

from __future__ import annotations

import json
import math

import numpy as np
import pytest
from scipy import stats

import rheofit
from rheofit.lots import Comparison, compare, same_curve_test, shared_range
from rheofit.curve import FlowCurve
from rheofit.errors import FitError, GeometryError, ModelNameError, ParameterError
from rheofit.fitting import fit, fit_all
from rheofit.flow import Slit, Tube
from rheofit.flow.predict import SAFETY_CAUTION
from rheofit.models import MODELS

TUBE = Tube("1 mm", "0.2 m")
Q = 2e-8  # [m^3/s]; wall shear rate about 240 1/s for the power law below
TRUE = {"K": 2.0, "n": 0.6}


def lot(name, rng, model="power_law", params=TRUE, scale=1.0, rate_range=(0.1, 1e3), points=15,
        noise=0.03):
    """An invented lot: the model's stress (times ``scale``) with log-normal noise."""
    rate = np.logspace(*np.log10(rate_range), points)
    stress = scale * MODELS[model].stress(rate, **params) * np.exp(noise * rng.standard_normal(points))
    return FlowCurve.from_arrays(rate, stress=stress, name=name)


@pytest.fixture(scope="module")
def same_truth():
    rng = np.random.default_rng(1)
    curves = [lot(name, rng) for name in ("A", "B", "C")]
    return compare(curves, geometry=TUBE, flow_rate=Q, model="power_law")


@pytest.fixture(scope="module")
def more_viscous():
    rng = np.random.default_rng(2)
    curves = [lot("A", rng), lot("B", rng), lot("thick", rng, scale=1.3)]
    return compare(curves, geometry=TUBE, flow_rate=Q, model="power_law")


# --- the three cases ------------------------------------------------------------------------------

def test_lots_of_the_same_truth_pass_with_a_large_p_value(same_truth):
    c = same_truth
    assert c.p_value > 0.05
    assert c.table["within_tolerance"].all()
    assert list(c.table["lot"]) == ["A", "B", "C"] and c.reference == 0
    assert c.table["verdict"][0] == "reference lot"
    for verdict in c.table["verdict"][1:]:
        assert verdict.startswith("within tolerance")
    assert (c.table["failed"] == "").all()
    assert np.all(np.abs(c.table["deviation"]) < 0.05)


def test_a_lot_thirty_percent_more_viscous_fails_with_a_tiny_p_value(more_viscous):
    c = more_viscous
    row = c.table.iloc[2]
    # scaling the stress by c at every shear rate leaves the velocity field at a given Q unchanged
    # and scales the pressure drop by c (common practice, no source): deviation +30 %
    assert row["deviation"] == pytest.approx(0.30, abs=0.04)
    assert row["max_viscosity_deviation"] == pytest.approx(0.30, abs=0.08)
    assert not row["within_tolerance"] and row["failed"] == "operating point and curve"
    assert "outside tolerance" in row["verdict"] and "pressure drop differs by +" in row["verdict"]
    assert c.p_value < 1e-6
    assert c.table.iloc[1]["within_tolerance"]


def test_same_pressure_drop_but_another_shape_is_reported_as_such():
    # two power laws whose tube pressure drops agree at Q: with
    # Q = pi n R^3 / (3n + 1) (tau_w / K)^(1/n)  (Chhabra & Richardson 2008, ch. 3; from memory)
    # the wall stress of the reference sets K of the second lot for n = 0.4
    def wall_stress(K, n):
        return K * (Q * (3 * n + 1) / (math.pi * n * TUBE.radius**3)) ** n

    n2 = 0.4
    K2 = wall_stress(**TRUE) / wall_stress(1.0, n2)
    rng = np.random.default_rng(3)
    curves = [lot("reference", rng, noise=0.01), lot("steeper", rng, params={"K": K2, "n": n2}, noise=0.01)]
    c = compare(curves, geometry=TUBE, flow_rate=Q, model="power_law")
    row = c.table.iloc[1]
    assert abs(row["deviation"]) < 0.02
    assert abs(row["max_viscosity_deviation"]) > 0.5
    assert row["failed"] == "curve" and not row["within_tolerance"]
    assert row["verdict"].startswith("same pressure drop at this operating point")
    assert "but the curve differs by up to" in row["verdict"]
    assert "elsewhere in the shared range" in row["verdict"]


# --- the same-curve test ------------------------------------------------------------------------

def test_f_test_equals_one_way_anova_for_newtonian_lots():
    # Source: Fisher (1925) Statistical Methods for Research Workers: one-way analysis of variance.
    # For ln tau = ln mu + ln gd (one parameter per lot, linear) the extra-sum-of-squares F test of
    # one shared mu against one mu per lot is exactly the one-way ANOVA of ln(eta) by lot.
    rng = np.random.default_rng(4)
    curves = [lot(f"lot {i}", rng, "newtonian", {"mu": mu}, points=10, noise=0.05)
              for i, mu in enumerate((0.010, 0.0104, 0.0098))]
    c = compare(curves, model="newtonian")
    anova = stats.f_oneway(*[np.log(k.viscosity) for k in curves])
    assert c.same_curve["f_statistic"] == pytest.approx(anova.statistic, rel=1e-6)
    assert c.p_value == pytest.approx(anova.pvalue, rel=1e-5)
    assert (c.same_curve["df_numerator"], c.same_curve["df_denominator"]) == (2, 27)


@pytest.mark.slow
def test_same_curve_test_rejects_at_its_nominal_rate_under_the_null():
    """Pairs of lots of one power-law truth: about 5 % of p-values fall below 0.05.

    The count must lie in the two-sided 99 % acceptance region of
    Binomial(replicates, 0.05), computed here (common practice, no source).
    """
    replicates = 300
    rng = np.random.default_rng(6)
    rejected = 0
    for _ in range(replicates):
        curves = [lot("a", rng, points=10), lot("b", rng, points=10)]
        test = same_curve_test(curves, [fit(k, "power_law") for k in curves])
        rejected += test["p_value"] < 0.05
    accept = stats.binom.ppf([0.005, 0.995], replicates, 0.05)
    print(f"same-curve test rejections at 0.05 under the null: {rejected}/{replicates} "
          f"(accepted {accept[0]:.0f} to {accept[1]:.0f})")
    assert accept[0] <= rejected <= accept[1]


def test_same_curve_test_that_cannot_be_made_is_flagged(monkeypatch):
    import rheofit.fitting as fitting

    real = fitting.optimum_rss

    def pooled_fails(curve, model):
        if curve.name == "pooled lots":
            raise FitError("the optimiser failed")
        return real(curve, model)

    monkeypatch.setattr(fitting, "optimum_rss", pooled_fails)
    rng = np.random.default_rng(7)
    c = compare([lot("a", rng), lot("b", rng)], model="power_law")
    assert math.isnan(c.p_value)
    assert "test_unavailable" in [f.code for f in c.flags]
    assert "not available" in c.text()
    assert json.loads(json.dumps(c.to_dict(), allow_nan=False))["p_value"] is None


# --- table, model choice, other operating points --------------------------------------------------

def test_table_columns_and_intervals(more_viscous):
    c = more_viscous
    for column in ("lot", "K", "K_low", "K_high", "n", "n_low", "n_high", "pressure_drop",
                   "pressure_drop_low", "pressure_drop_high", "wall_shear_rate", "deviation",
                   "max_viscosity_deviation", "max_viscosity_deviation_at", "within_tolerance",
                   "failed", "verdict"):
        assert column in c.table.columns, column
    assert "flow_rate" not in c.table.columns
    t = c.table
    assert np.all(t["pressure_drop_low"] < t["pressure_drop"]) and np.all(t["pressure_drop"] < t["pressure_drop_high"])
    assert np.all(t["K_low"] < t["K"]) and np.all(t["K"] < t["K_high"])
    for i, p in enumerate(c.predictions):
        assert t["pressure_drop"][i] == p.pressure_drop and t["pressure_drop_low"][i] == p.pressure_drop_ci95[0]
    assert len(c.fits) == len(c.curves) == len(c.predictions) == 3
    assert c.shared_range == pytest.approx((0.1, 1e3))
    assert c.solved == "pressure_drop" and c.operating_point == {"flow_rate": Q}


def test_pressure_drop_given_compares_flow_rates_in_a_slit():
    rng = np.random.default_rng(8)
    slit = Slit("0.2 mm", "5 mm", "2 cm")
    c = compare([lot("A", rng), lot("thick", rng, scale=1.3)], geometry=slit, pressure_drop="5 kPa",
                model="power_law", tolerance="10 %")
    assert c.solved == "flow_rate" and "pressure_drop" not in c.table.columns
    assert {"flow_rate", "flow_rate_low", "flow_rate_high"} <= set(c.table.columns)
    # at a fixed wall stress a power law's flow rate scales as (1/c)^(1/n) when K is scaled by c
    # (Chhabra & Richardson 2008, ch. 3, slit form; from memory)
    k, n = c.fits[1].values["K"] / c.fits[0].values["K"], c.fits[1].values["n"]
    assert c.table["deviation"][1] == pytest.approx(c.table["flow_rate"][1] / c.table["flow_rate"][0] - 1)
    assert c.table["deviation"][1] < -0.15
    assert "flow rate differs by -" in c.table["verdict"][1]
    assert k == pytest.approx(1.3, rel=0.15) and n == pytest.approx(0.6, abs=0.05)


def test_curves_only_without_an_operating_point():
    rng = np.random.default_rng(9)
    c = compare([lot("A", rng), lot("thick", rng, scale=1.3)], model="power_law")
    assert c.predictions == () and c.geometry is None and c.solved is None
    assert "pressure_drop" not in c.table.columns and "deviation" not in c.table.columns
    assert c.table["failed"][1] == "curve"
    assert c.table["verdict"][1].startswith("outside tolerance: the viscosity differs by up to +")


def test_model_is_the_best_by_summed_aicc():
    rng = np.random.default_rng(10)
    curves = [lot("A", rng, points=10), lot("B", rng, points=10)]
    c = compare(curves, geometry=TUBE, flow_rate=Q)
    totals = {}
    for ranking in (fit_all(k) for k in curves):
        for r in ranking:
            totals.setdefault(r.model, []).append(r.aicc)
    expected = min((sum(v), m) for m, v in totals.items() if len(v) == 2)[1]
    assert c.model == expected and c.model_choice.startswith("best by AICc summed")
    assert c.aicc_totals[expected] == pytest.approx(min(c.aicc_totals.values()))
    assert all(f.model == expected for f in c.fits)


def test_a_lot_the_common_model_fits_badly_is_flagged():
    rng = np.random.default_rng(12)
    # 6 points for the Newtonian lot: with 8, the three-parameter Ellis model fits both lots within
    # 10 of the best AICc (its Newtonian limit costs only the AICc penalty), so nothing misfits
    water_like = lot("thin", rng, "newtonian", {"mu": 0.5}, rate_range=(0.1, 100), points=6, noise=0.02)
    plateau = lot("gel", rng, "carreau", {"eta0": 1.0, "eta_inf": 1e-3, "lam": 1.0, "n": 0.3},
                  rate_range=(0.1, 100), points=8, noise=0.02)
    c = compare([water_like, plateau])
    flags = [f for f in c.flags if f.code == "model_misfits_lot"]
    assert flags and flags[0].data["lot"] == "thin" and flags[0].data["delta_aicc"] > 10


def test_flags_name_the_lot_and_the_operating_point_outside_the_shared_range():
    rng = np.random.default_rng(13)
    curves = [lot("A", rng, rate_range=(1.0, 5.0), points=8), lot("B", rng, rate_range=(2.0, 8.0), points=8)]
    c = compare(curves, geometry=TUBE, flow_rate=Q, model="power_law")
    codes = [f.code for f in c.flags]
    assert "narrow_shared_range" in codes and "operating_point_outside_shared_range" in codes
    assert c.shared_range == pytest.approx((2.0, 5.0))
    lot_flags = [f for f in c.flags if f.code == "extrapolation"]
    assert lot_flags and lot_flags[0].message.startswith("Lot 'A': ")


def test_reference_by_name_and_unique_labels():
    rng = np.random.default_rng(14)
    curves = [lot("same", rng), lot("same", rng), lot("", rng, scale=1.3)]
    c = compare(curves, model="power_law", reference="same (2)")
    assert list(c.table["lot"]) == ["same", "same (2)", "lot 3"] and c.reference == 1
    assert c.table["verdict"][1] == "reference lot"


def test_progress_is_reported():
    rng = np.random.default_rng(15)
    seen = []
    compare([lot("A", rng), lot("B", rng)], geometry=TUBE, flow_rate=Q, model="power_law",
            progress=seen.append)
    # a given model is judged on each lot too: every model ranked there (2), then the fits (2),
    # the predictions (2) and the same-curve test (1)
    assert len(seen) == 7 and "same-curve" in seen[-1] and "'B'" in seen[1]
    assert seen[0].startswith("ranking every model")


# --- output forms ----------------------------------------------------------------------------------

def test_to_dict_is_json_and_text_is_readable(more_viscous):
    c = more_viscous
    data = json.loads(json.dumps(c.to_dict(), allow_nan=False))
    assert data["kind"] == "rheofit-comparison" and data["model"] == "power_law"
    assert data["reference_lot"] == "A" and len(data["table"]) == 3 and len(data["fits"]) == 3
    assert data["table"][2]["within_tolerance"] is False
    assert data["same_curve_test"]["p_value"] == pytest.approx(c.p_value)
    assert data["caution"] == SAFETY_CAUTION
    text = str(c)
    assert "F = " in text and "p = " in text and "verdict: outside tolerance" in text
    assert text.endswith(SAFETY_CAUTION) and "A (reference)" in text
    assert "p_value" in repr(c)


def test_public_api_exports():
    assert rheofit.Comparison is Comparison
    rng = np.random.default_rng(16)
    curves = [lot("A", rng), lot("B", rng)]
    assert isinstance(rheofit.compare(curves, model="power_law"), Comparison)
    assert rheofit.compare is compare  # the function, not a module of the same name


# --- errors -----------------------------------------------------------------------------------------

@pytest.fixture(scope="module")
def two():
    rng = np.random.default_rng(17)
    return [lot("A", rng), lot("B", rng)]


def test_too_few_or_wrong_curves(two):
    with pytest.raises(ParameterError, match="at least two lots; got 1"):
        compare(two[:1])
    with pytest.raises(ParameterError, match="at least two lots; got 1"):
        compare(two[0])
    with pytest.raises(ParameterError, match="Item 2 of curves is a str"):
        compare([two[0], "B.csv"])
    with pytest.raises(ParameterError, match="list of flow curves"):
        compare(42)


@pytest.mark.parametrize("tolerance", [0, -0.1, float("nan"), "ten", None, "10 kPa"])
def test_bad_tolerance(two, tolerance):
    with pytest.raises(ParameterError, match="tolerance"):
        compare(two, tolerance=tolerance, model="power_law")


def test_bad_reference(two):
    with pytest.raises(ParameterError, match="index from 0 to 1"):
        compare(two, reference=2, model="power_law")
    with pytest.raises(ParameterError, match="index from 0 to 1"):
        compare(two, reference=True, model="power_law")
    with pytest.raises(ParameterError, match="Did you mean 'A'"):
        compare(two, reference="AA", model="power_law")


def test_operating_point_errors(two):
    with pytest.raises(GeometryError, match="needs a channel"):
        compare(two, flow_rate=Q, model="power_law")
    with pytest.raises(GeometryError, match="neither was given"):
        compare(two, geometry=TUBE, model="power_law")
    with pytest.raises(GeometryError, match="both was given"):
        compare(two, geometry=TUBE, flow_rate=Q, pressure_drop=1e3, model="power_law")
    with pytest.raises(GeometryError, match="one operating point; got 2"):
        compare(two, geometry=TUBE, flow_rate=[Q, 2 * Q], model="power_law")
    with pytest.raises(GeometryError, match="Expected a geometry"):
        compare(two, geometry="1 mm tube", flow_rate=Q, model="power_law")


def test_unknown_model(two):
    with pytest.raises(ModelNameError, match="Did you mean 'power_law'"):
        compare(two, model="power_lw")


def test_no_shared_shear_rate_range():
    rng = np.random.default_rng(18)
    low = lot("low", rng, rate_range=(0.1, 10.0))
    high = lot("high", rng, rate_range=(100.0, 1e3))
    with pytest.raises(FitError, match="share no shear-rate range") as info:
        compare([low, high], model="power_law")
    assert "'low'" in str(info.value) and "'high'" in str(info.value)
    with pytest.raises(FitError, match="share no shear-rate range"):
        shared_range([low, high])


def test_a_lot_that_cannot_be_fitted_is_named(two):
    bad = FlowCurve.from_arrays([1.0, 2.0, 3.0, 4.0], stress=[1.0, -2.0, 3.0, 4.0], name="broken")
    with pytest.raises(FitError, match="broken"):
        compare([two[0], bad], model="power_law")


def test_no_model_fits_every_lot(two, monkeypatch):
    import rheofit.fitting as fitting

    real = fitting.aicc_scores

    def disjoint(curve, models=None):
        return real(curve, ["power_law"] if curve.name == "A" else ["newtonian"])

    monkeypatch.setattr(fitting, "aicc_scores", disjoint)
    with pytest.raises(FitError, match="No model could be fitted to every lot"):
        compare(two)


def test_rankings_given_are_used_instead_of_fitting_again():
    rng = np.random.default_rng(10)
    curves = [lot("A", rng, points=10), lot("B", rng, points=10)]
    rankings = [fit_all(k) for k in curves]
    given = compare(curves, geometry=TUBE, flow_rate=Q, rankings=rankings)
    fresh = compare(curves, geometry=TUBE, flow_rate=Q)
    assert given.model == fresh.model
    chosen = [next(r for r in ranking if r.model == given.model) for ranking in rankings]
    assert all(f is c for f, c in zip(given.fits, chosen))
    assert given.table.equals(fresh.table)  # fit_all's fits are fit()'s: the same numbers
