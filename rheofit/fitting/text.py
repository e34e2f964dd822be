"""The plain-text report of a :class:`~rheofit.fitting.result.FitResult`."""

from __future__ import annotations

import math

from rheofit.fitting.statistics import CORRELATION_SHOWN_ABOVE


def _g(value, fmt: str = ".4g") -> str:
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return "-"
    return f"{value:{fmt}}"


def _heading(text: str, underline: str = "-") -> list[str]:
    return [text, underline * len(text)]


def _header(result) -> list[str]:
    d = result.declaration
    title = f"{d.title} fit" + (f" of '{result.name}'" if result.name else "")
    lines = _heading(title, "=")
    lines.append(f"Equation   {d.equation}")
    lines.append(f"Reference  {d.reference}")
    data = f"Data       {result.n_points} points"
    if result.shear_rate_range:
        low, high = result.shear_rate_range
        data += f", shear rate {low:.3g} to {high:.3g} 1/s"
    lines.append(data)
    if result.source:
        lines.append(f"Source     {result.source}")
    return lines


def _parameter_table(result) -> list[str]:
    methods = sorted({p.method for p in result.params.values()})
    shared = len(methods) == 1
    heading = "Parameters (SI units, 95 % confidence intervals"
    heading += f" by {methods[0]})" if shared else ")"
    rows = [("name", "value", "std. error", "95 % interval", "unit", "" if shared else "method")]
    for p in result.params.values():
        rows.append((p.name, _g(p.value), _g(p.stderr, ".2g"), p.interval_text(),
                     p.unit, "" if shared else p.method))
    widths = [max(len(r[i]) for r in rows) for i in range(len(rows[0]))]
    lines = _heading(heading)
    for r in rows:
        lines.append("  " + "  ".join(c.ljust(w) for c, w in zip(r, widths)).rstrip())
    unresolved = [p.name for p in result.params.values() if not p.resolved]
    if unresolved:
        lines.append(f"  not resolved by the data: {', '.join(unresolved)} (see flags)")
    return lines


def _goodness(result) -> list[str]:
    rms = result.rms_log_residual
    lines = _heading("Goodness of fit (log space)")
    typical = f"  (typical deviation about {100 * math.expm1(rms):.2g} %)" if math.isfinite(rms) else ""
    lines.append(f"  rms log residual   {_g(rms, '.4g')}{typical}")
    lines.append(f"  R^2 of ln(stress)  {_g(result.r_squared_log, '.6f')}")
    lines.append(f"  AICc               {_g(result.aicc, '.2f')}")
    lines.append(f"  BIC                {_g(result.bic, '.2f')}")
    lines.append(f"  k = {result.n_params} parameters, N = {result.n_points} points")
    return lines


def _correlations(result) -> list[str]:
    """Pairs of estimates with |r| above the threshold, from the covariance at the optimum."""
    if result.n_params < 2:
        return []
    lines = _heading(f"Correlations of the estimates (|r| > {CORRELATION_SHOWN_ABOVE:g})")
    pairs = result.correlations()
    if pairs is None:
        return lines + ["  not available: the fit gave no covariance"]
    if not pairs:
        return lines + ["  none"]
    width = max(len(f"{a}, {b}") for a, b, _ in pairs)
    lines += [f"  {f'{a}, {b}':<{width}}  {r:+.3f}" for a, b, r in pairs]
    return lines + ["  (first order, from the covariance at the optimum; the same for the SI values",
                    "  and for the log coordinates the fit uses inside)"]


def _flags(result) -> list[str]:
    lines = _heading("Flags")
    if not result.flags:
        return lines + ["  none"]
    return lines + [f"  - [{f.code}] {f.message}" for f in result.flags]


def text_report(result) -> str:
    """Sections: header (model, equation, data), parameters, correlations, goodness of fit, flags."""
    parts = [_header(result), _parameter_table(result), _correlations(result), _goodness(result),
             _flags(result)]
    parts = [part for part in parts if part]
    return "\n\n".join("\n".join(p) for p in parts)
