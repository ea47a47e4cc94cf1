"""Unit systems as base units, and scale factors derived from dimension exponents.

A consistent unit system is fixed by four base units (length, mass, time, temperature
interval), each expressed in SI; force-based systems (lbf) derive their mass unit as
F * T^2 / L. A quantity of dimension L^a M^b T^c Theta^d written in a system is converted
to SI by multiplying with ``L^a * M^b * T^c * Theta^d`` (dimensional analysis, after the
CalculiX manual's "Units" section). Nothing here is typed in per quantity: every factor
follows from :data:`DIMENSIONS`.

Pure functions, no I/O; they accept scalars or numpy arrays.
"""
from __future__ import annotations

from dataclasses import dataclass
from typing import Optional

import numpy as np

#: dimension exponents (length, mass, time, temperature interval) of every quantity used
DIMENSIONS: dict[str, tuple[int, int, int, int]] = {
    "length": (1, 0, 0, 0),
    "mass": (0, 1, 0, 0),
    "time": (0, 0, 1, 0),
    "temperature": (0, 0, 0, 1),
    "force": (1, 1, -2, 0),
    "stress": (-1, 1, -2, 0),            # E, G, K, yield stress, hyperelastic C_ij and mu_i
    "compliance": (1, -1, 2, 0),         # hyperelastic D (1/stress)
    "density": (-3, 1, 0, 0),
    "acceleration": (1, 0, -2, 0),       # gravity
    "speed": (1, 0, -1, 0),              # wave speeds
    "conductivity": (1, 1, -3, -1),
    "specific_heat": (2, 0, -2, -1),
    "expansion": (0, 0, 0, -1),
    "diffusivity": (2, 0, -1, 0),
    "volumetric_heat_capacity": (-1, 1, -2, -1),
    "film_coefficient": (0, 1, -3, -1),
    "energy": (2, 1, -2, 0),
    "specific_stiffness": (2, 0, -2, 0),  # E / rho
}


@dataclass(frozen=True)
class UnitSystem:
    """A consistent system: its base units in SI (m, kg, s, K-interval) and display labels."""

    name: str
    length: float
    mass: float
    time: float
    temperature: float = 1.0
    #: name of the temperature scale ("K/C" or "F") the system is used with
    temperature_scale: str = "K/C"
    labels: tuple[tuple[str, str], ...] = ()
    aliases: tuple[str, ...] = ()
    prior: float = 0.0

    def scale(self, quantity: str) -> float:
        """Factor that converts a value of ``quantity`` written in this system to SI."""
        return scale_to_si(DIMENSIONS[quantity], (self.length, self.mass, self.time, self.temperature))

    def label(self, quantity: str) -> str:
        return dict(self.labels).get(quantity, f"{self.name} units")


def mass_from_force(force_si: float, length_si: float, time_si: float) -> float:
    """Mass unit of a force-based system: F * T^2 / L (e.g. lbf s^2/in = 175.127 kg)."""
    return force_si * time_si ** 2 / length_si


def scale_to_si(dims, base) -> float:
    """``L^a M^b T^c Theta^d`` for dimension exponents ``dims`` and base units ``base`` (in SI)."""
    out = 1.0
    for exp, unit in zip(dims, base):
        out *= float(unit) ** exp
    return out


def scale_vector(quantity: str, systems) -> np.ndarray:
    """Scale factors to SI of one quantity for a sequence of systems (one entry per system)."""
    return np.array([s.scale(quantity) for s in systems], dtype=float)


def convert(value, quantity: str, source: UnitSystem, target: UnitSystem):
    """A value of ``quantity`` written in ``source`` expressed in ``target``."""
    return np.asarray(value, dtype=float) * (source.scale(quantity) / target.scale(quantity))


def decades_outside(x, lo: float, hi: float):
    """How many decades |x| lies outside [lo, hi] (0 inside; nan where x is 0 or not finite)."""
    ax = np.abs(np.asarray(x, dtype=float))
    with np.errstate(divide="ignore", invalid="ignore"):
        lx = np.where((ax > 0) & np.isfinite(ax), np.log10(ax), np.nan)
    return np.maximum(0.0, np.maximum(np.log10(lo) - lx, lx - np.log10(hi)))


def linear_outside(x, lo: float, hi: float, unit: float):
    """Distance of x outside [lo, hi] in steps of ``unit`` (for dimensionless ratios such as nu)."""
    x = np.asarray(x, dtype=float)
    return np.maximum(0.0, np.maximum(lo - x, x - hi)) / unit


def bar_speed(modulus, density):
    """c0 = sqrt(E / rho) (nan where not positive)."""
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.sqrt(np.where((np.asarray(modulus) > 0) & (np.asarray(density) > 0),
                                np.asarray(modulus, float) / np.asarray(density, float), np.nan))


def p_wave_modulus(e, nu):
    """M = E (1 - nu) / ((1 + nu)(1 - 2 nu)) (standard moduli conversion); nan for nu >= 0.5 or nu <= -1."""
    e, nu = np.asarray(e, float), np.asarray(nu, float)
    ok = (nu < 0.5) & (nu > -1.0)
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.where(ok, e * (1 - nu) / ((1 + nu) * (1 - 2 * nu)), np.nan)


def diffusivity(k, density, c):
    """a = k / (rho c)."""
    with np.errstate(invalid="ignore", divide="ignore"):
        return np.asarray(k, float) / (np.asarray(density, float) * np.asarray(c, float))


def absolute_zero_of(scale: str) -> tuple[float, ...]:
    """The absolute-zero values a deck in that temperature scale may give (absolute or relative scale)."""
    return (0.0, -273.15) if scale == "K/C" else (0.0, -459.67)


def temperature_scale_of(absolute_zero: Optional[float]) -> Optional[str]:
    """The scale of an absolute-zero value (to 0.5 degree): 'C' (-273.15), 'F' (-459.67), 'K or R' (0)."""
    if absolute_zero is None or not np.isfinite(absolute_zero):
        return None
    for name, ref in (("C", -273.15), ("F", -459.67), ("K or R", 0.0)):
        if abs(absolute_zero - ref) <= 0.5:
            return name
    return None
