"""A new model is one declaration: declared once below, it is fitted, predicted in a tube and a
slit, drawn, reported and listed by ``rheofit models`` with no edit anywhere else.

The model and its data are invented for this test.
"""

from __future__ import annotations

import numpy as np
import pytest
from scipy import integrate, optimize
from typer.testing import CliRunner

from rheofit.cli import app
from rheofit.curve import FlowCurve
from rheofit.fitting import fit, fit_all
from rheofit.fitting.band import drawn_band
from rheofit.flow.curves import profile_against_newtonian
from rheofit.flow import Slit, Tube, predict
from rheofit.jobs.analysis import OperatingCase, analyse
from rheofit.models import MODELS, Parameter, ViscosityModel

TUBE = Tube("0.8 mm", "30 cm")
SLIT = Slit("0.2 mm", "5 mm", "5 cm")


@pytest.fixture
def root_law(monkeypatch):
    """The throwaway declaration, registered in MODELS for one test."""

    def root_law_stress(rate, mu, s):
        """tau = mu * gamma_dot + s * sqrt(gamma_dot): an invented law, for this test only."""
        return mu * rate + s * np.sqrt(rate)

    def guess(rate, stress):
        return {"mu": 0.5 * float(np.min(stress / rate)), "s": float(np.min(stress / np.sqrt(rate)))}

    declaration = ViscosityModel(
        "root_law", "Root law (invented)", "tau = mu * gamma_dot + s * sqrt(gamma_dot)",
        (Parameter("mu", "Pa*s", 1e-9, 1e6, "viscosity at high shear"),
         Parameter("s", "Pa*s^0.5", 1e-9, 1e6, "coefficient of the square-root term")),
        root_law_stress, guess, "invented for this test",
        example={"mu": 0.01, "s": 0.5}, example_range=(0.1, 1e5),
    )
    monkeypatch.setitem(MODELS, declaration.name, declaration)
    return declaration


def invented_curve(declaration, name="root-law sample"):
    """A sweep over the declaration's example range with 2 % log-normal noise (seed fixed)."""
    rate = np.geomspace(*declaration.example_range, 30)
    noise = np.exp(0.02 * np.random.default_rng(5).standard_normal(rate.size))
    return FlowCurve.from_arrays(rate, stress=declaration.stress(rate, **declaration.example) * noise,
                                 name=name, source="invented")


def test_a_new_model_is_fitted_predicted_drawn_and_reported(root_law):
    import matplotlib

    matplotlib.use("Agg")
    from rheofit.report.figures_fit import flow_curve_figure
    from rheofit.report.figures_flow import velocity_profile_figure
    from rheofit.report.html import build_report

    curve = invented_curve(root_law)
    result = fit(curve, "root_law")
    for name, true in root_law.example.items():
        assert result.params[name].resolved
        assert result.values[name] == pytest.approx(true, rel=0.1)
    assert "root_law" in {r.model for r in fit_all(curve)}

    q = 20e-9 / 60
    for geometry, power, scale in ((TUBE, 3, np.pi * TUBE.radius**3),
                                   (SLIT, 2, 2 * SLIT.width * SLIT.half_gap**2)):
        prediction = predict(result, geometry, flow_rate="20 uL/min")
        tau_w = float(prediction.wall_shear_stress)
        # Rabinowitsch (1929); Mooney (1931): Q = scale / tau_w^k int_0^tau_w tau^(k-1) gd(tau) dtau
        # (tube k = 3, scale pi R^3; slit k = 2, scale 2 W h^2), the inverse by root finding here
        inverse = lambda tau: optimize.brentq(lambda g: result.stress(g) - tau, 0.0, 1e9, xtol=1e-300,
                                              rtol=1e-14)
        integral, _ = integrate.quad(lambda t: t ** (power - 1) * inverse(t), 0.0, tau_w, epsrel=1e-11)
        assert scale * integral / tau_w**power == pytest.approx(q, rel=1e-8)
        assert predict(result, geometry, flow_rate=2 * q).pressure_drop > prediction.pressure_drop

    assert flow_curve_figure([result], drawn_band(result), curve=curve).axes
    slit_prediction = predict(result, SLIT, flow_rate="20 uL/min")
    assert velocity_profile_figure(slit_prediction, profile_against_newtonian(slit_prediction)).axes

    analysis = analyse([curve], model="root_law", cases=[
        OperatingCase("tube", TUBE, flow_rate=20e-9 / 60), OperatingCase("slit", SLIT, flow_rate=20e-9 / 60)])
    page = build_report(analysis)
    assert "Root law (invented)" in page and "invented for this test" in page


def test_a_new_model_is_listed_and_fitted_by_the_command_line(root_law, tmp_path):
    curve = invented_curve(root_law)
    data = tmp_path / "root_law.csv"
    rows = "\n".join(f"{g:.6g},{t:.6g}" for g, t in zip(curve.shear_rate, curve.stress))
    data.write_text("# invented data\nShear rate (1/s),Shear stress (Pa)\n" + rows + "\n")
    runner = CliRunner()
    listed = runner.invoke(app, ["models"])
    assert listed.exit_code == 0 and "root_law" in listed.output and "invented for this test" in listed.output
    fitted = runner.invoke(app, ["fit", str(data), "--model", "root_law"])
    assert fitted.exit_code == 0, fitted.output
    assert "root_law" in fitted.output
