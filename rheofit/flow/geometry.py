"""Flow geometries: a circular tube and a wide parallel-plate slit (SI inside).

Each geometry knows the few numbers the generic flow engine needs:

* ``wall_shear_stress(dP)`` from a force balance on fully developed flow,
  tube tau_w = dP R / (2 L), slit tau_w = dP h / L with h = H/2
  [Pa] (Bird, Stewart & Lightfoot 2002, ch. 2);
* ``apparent_wall_shear_rate(Q)``, the wall shear rate a Newtonian fluid
  would have at the same flow rate: tube 4 Q / (pi R^3) (= 8 V / D), slit
  6 Q / (W H^2) (= 6 V / H) [1/s];
* ``flow_scale`` and ``stress_power`` k of the Rabinowitsch-Mooney
  integral Q = flow_scale * int_0^gd_w (1 - (tau(s)/tau_w)^k) ds
  (tube: pi R^3 / 3 and k = 3; slit: W h^2 and k = 2), see
  :mod:`rheofit.flow.engine`;
* ``half_size`` (R or h), the distance from the centre line to the wall.

Lengths may be given as SI floats [m] or as text with a unit ("0.5 mm"),
parsed by :func:`rheofit.units.parse_quantity` (text without a unit is refused).

>>> Tube("0.5 mm", "50 mm").radius
0.00025
>>> round(Slit(gap="100 um", width="2 mm", length="20 mm").aspect_ratio, 9)
20.0
"""

from __future__ import annotations

import math
from dataclasses import dataclass

import numpy as np

from rheofit.curve import Flag
from rheofit.errors import GeometryError
from rheofit.units import parse_quantity

#: a slit narrower than this width/gap ratio is flagged (W/H < 10)
NARROW_SLIT_RATIO = 10.0


def _mm(metres: float) -> str:
    """A length for people: micrometres below 1 mm, millimetres below 1 m."""
    if metres < 1e-3:
        return f"{metres * 1e6:.4g} µm"
    return f"{metres * 1e3:.4g} mm" if metres < 1.0 else f"{metres:.4g} m"


def _length(owner: str, name: str, value, example: str) -> float:
    """Parse one length and check it is positive and finite [m]."""
    number = parse_quantity(value, "length", f"{owner} {name}")
    if not (math.isfinite(number) and number > 0.0):
        raise GeometryError(
            f"{owner} {name} = {value!r} is not a positive, finite length; "
            f"give a number in metres or text with a unit, e.g. {owner}({example})."
        )
    return float(number)


def _operating(value):
    """Operating-point values as a float array (checked by the engine, not here)."""
    return np.asarray(value, dtype=float)


@dataclass(frozen=True)
class Tube:
    """A straight circular tube (also a needle or a capillary).

    Parameters
    ----------
    diameter : float or str
        Inner diameter D [m] (text such as ``"0.5 mm"`` is accepted).
    length : float or str
        Length L [m] over which the pressure drop acts.
    """

    diameter: float
    length: float

    #: integrand power k in Q = flow_scale * int (1 - (tau/tau_w)^k) ds
    stress_power = 3
    #: name of the optional closed-form hook on a model declaration
    closed_form_key = "tube_flow_rate"
    kind = "tube"

    def __post_init__(self):
        example = "diameter='0.5 mm', length='50 mm'"
        object.__setattr__(self, "diameter", _length("Tube", "diameter", self.diameter, example))
        object.__setattr__(self, "length", _length("Tube", "length", self.length, example))

    @property
    def radius(self) -> float:
        """R = D / 2 [m]."""
        return 0.5 * self.diameter

    @property
    def half_size(self) -> float:
        """Distance from the centre line to the wall, R [m]."""
        return self.radius

    @property
    def area(self) -> float:
        """Cross-section pi R^2 [m^2]."""
        return math.pi * self.radius**2

    @property
    def hydraulic_diameter(self) -> float:
        """4 * area / wetted perimeter = D [m]."""
        return self.diameter

    @property
    def flow_scale(self) -> float:
        """pi R^3 / 3 [m^3] in Q = flow_scale * int_0^gd_w (1 - (tau/tau_w)^3) ds."""
        return math.pi * self.radius**3 / 3.0

    def wall_shear_stress(self, pressure_drop):
        """tau_w = dP R / (2 L) [Pa] (force balance; Bird, Stewart & Lightfoot 2002, sect. 2.3)."""
        return _operating(pressure_drop) * self.radius / (2.0 * self.length)

    def pressure_drop(self, wall_shear_stress):
        """dP = 2 L tau_w / R [Pa], the inverse of :meth:`wall_shear_stress`."""
        return _operating(wall_shear_stress) * 2.0 * self.length / self.radius

    def apparent_wall_shear_rate(self, flow_rate):
        """Newtonian wall shear rate 4 Q / (pi R^3) = 8 V / D [1/s] (Rabinowitsch 1929)."""
        return 4.0 * _operating(flow_rate) / (math.pi * self.radius**3)

    def closed_form_flow_rate(self, function, wall_shear_stress, params):
        """Call a model's ``tube_flow_rate(tau_w, radius, **params)`` hook [m^3/s]."""
        return function(wall_shear_stress, self.radius, **params)

    @property
    def flags(self) -> tuple[Flag, ...]:
        """Nothing to flag for a tube."""
        return ()

    def describe(self) -> str:
        return f"tube, D = {_mm(self.diameter)}, L = {_mm(self.length)}"

    def to_dict(self) -> dict:
        return {"kind": self.kind, "diameter": self.diameter, "length": self.length}


@dataclass(frozen=True)
class Slit:
    """A slit between parallel plates: gap H, width W (W >> H), length L.

    The engine treats the slit as infinitely wide (parallel plates).  A slit
    with W/H < 10 is flagged: side walls slow the flow and the parallel-plate
    result over-predicts Q (for a Newtonian fluid by the amount in the flag,
    from the rectangular-duct series of Boussinesq 1868).

    Parameters
    ----------
    gap : float or str
        Gap H between the plates [m].
    width : float or str
        Width W [m].
    length : float or str
        Length L [m].
    """

    gap: float
    width: float
    length: float

    stress_power = 2
    closed_form_key = "slit_flow_rate"
    kind = "slit"

    def __post_init__(self):
        example = "gap='100 um', width='2 mm', length='20 mm'"
        for name in ("gap", "width", "length"):
            object.__setattr__(self, name, _length("Slit", name, getattr(self, name), example))

    @property
    def half_gap(self) -> float:
        """h = H / 2 [m]."""
        return 0.5 * self.gap

    @property
    def half_size(self) -> float:
        """Distance from the centre plane to a wall, h [m]."""
        return self.half_gap

    @property
    def aspect_ratio(self) -> float:
        """W / H [-]."""
        return self.width / self.gap

    @property
    def area(self) -> float:
        """Cross-section W H [m^2]."""
        return self.width * self.gap

    @property
    def hydraulic_diameter(self) -> float:
        """4 * area / wetted perimeter = 2 W H / (W + H) [m]."""
        return 2.0 * self.width * self.gap / (self.width + self.gap)

    @property
    def flow_scale(self) -> float:
        """W h^2 [m^3] in Q = flow_scale * int_0^gd_w (1 - (tau/tau_w)^2) ds."""
        return self.width * self.half_gap**2

    def wall_shear_stress(self, pressure_drop):
        """tau_w = dP h / L [Pa] (force balance on a slab; Bird, Stewart & Lightfoot 2002, ch. 2)."""
        return _operating(pressure_drop) * self.half_gap / self.length

    def pressure_drop(self, wall_shear_stress):
        """dP = L tau_w / h [Pa], the inverse of :meth:`wall_shear_stress`."""
        return _operating(wall_shear_stress) * self.length / self.half_gap

    def apparent_wall_shear_rate(self, flow_rate):
        """Newtonian wall shear rate 6 Q / (W H^2) = 6 V / H [1/s]."""
        return 6.0 * _operating(flow_rate) / (self.width * self.gap**2)

    def closed_form_flow_rate(self, function, wall_shear_stress, params):
        """Call a model's ``slit_flow_rate(tau_w, half_gap, width, **params)`` hook [m^3/s]."""
        return function(wall_shear_stress, self.half_gap, self.width, **params)

    def newtonian_side_wall_factor(self, terms: int = 200) -> float:
        """Q(rectangular duct) / Q(parallel plates) for a Newtonian fluid [-].

        1 - (192 H / (pi^5 W)) * sum_{k odd} tanh(k pi W / (2 H)) / k^5
        (Boussinesq 1868; the series as given by Shah & London 1978).
        """
        k = np.arange(1, 2 * terms, 2, dtype=float)
        series = np.sum(np.tanh(k * math.pi * self.aspect_ratio / 2.0) / k**5)
        return float(1.0 - 192.0 / (math.pi**5 * self.aspect_ratio) * series)

    @property
    def flags(self) -> tuple[Flag, ...]:
        """A ``narrow_slit`` flag when W/H < :data:`NARROW_SLIT_RATIO`."""
        if self.aspect_ratio >= NARROW_SLIT_RATIO:
            return ()
        excess = 1.0 / self.newtonian_side_wall_factor() - 1.0
        return (
            Flag(
                "narrow_slit",
                f"The slit is only {self.aspect_ratio:.3g} times wider than its gap (W/H < "
                f"{NARROW_SLIT_RATIO:g}); the parallel-plate result ignores the side walls and "
                f"over-predicts the flow rate (by {100 * excess:.0f} % for a Newtonian fluid) and "
                "under-predicts the pressure drop. A rectangular-channel solver would be needed.",
                {"aspect_ratio": self.aspect_ratio, "newtonian_overprediction": excess},
            ),
        )

    def describe(self) -> str:
        return (
            f"slit, H = {_mm(self.gap)}, W = {_mm(self.width)}, L = {_mm(self.length)}"
        )

    def to_dict(self) -> dict:
        return {"kind": self.kind, "gap": self.gap, "width": self.width, "length": self.length}


#: the geometries the engine accepts
GEOMETRIES = (Tube, Slit)


def check_geometry(geometry) -> Tube | Slit:
    """Return ``geometry`` if it is a Tube or a Slit, else raise GeometryError."""
    if isinstance(geometry, GEOMETRIES):
        return geometry
    raise GeometryError(
        f"Expected a geometry (Tube(diameter, length) or Slit(gap, width, length)), "
        f"got {type(geometry).__name__}."
    )
