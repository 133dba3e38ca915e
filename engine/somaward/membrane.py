"""Membrane and cable constants of a uniform cylinder.

Units: diameters and lengths in µm, specific membrane resistance Rm in Ω·cm², axial resistivity
Ri in Ω·cm, specific capacitance Cm in µF/cm², resistances in MΩ, times in ms.

The per-unit-length constants (Hodgkin & Rushton 1946, Proc R Soc B 133:444; Rall 1977,
Handbook of Physiology sec. 1 vol. 1) are

    rm = Rm / (π d)        [Ω·cm]       membrane resistance of a unit length
    ri = 4 Ri / (π d²)     [Ω/cm]       axial resistance of a unit length
    cm = Cm · π d          [µF/cm]      membrane capacitance of a unit length

and give the cable equation λ² ∂²V/∂x² − τ ∂V/∂t − V = 0 with λ² = rm/ri and τ = rm·cm = Rm·Cm.
"""

import math

import numpy as np

__all__ = [
    "per_unit_length",
    "space_constant_um",
    "membrane_time_constant_ms",
    "input_resistance_infinite_Mohm",
    "ac_space_constant_um",
    "sphere_input_resistance_Mohm",
    "sphere_capacitance_pF",
]

UM_PER_CM = 1.0e4


def per_unit_length(diameter_um, rm_ohm_cm2, ri_ohm_cm, cm_uF_cm2=1.0):
    """Per-unit-length membrane resistance, axial resistance and capacitance.

    Parameters
    ----------
    diameter_um : float or array
        Cylinder diameter (µm).
    rm_ohm_cm2, ri_ohm_cm : float
        Specific membrane resistance (Ω·cm²) and axial resistivity (Ω·cm).
    cm_uF_cm2 : float, default 1.0
        Specific membrane capacitance (µF/cm²).

    Returns
    -------
    dict
        ``rm_ohm_cm`` (Ω·cm), ``ri_ohm_per_cm`` (Ω/cm), ``cm_uF_per_cm`` (µF/cm).

    Notes
    -----
    rm = Rm/(πd), ri = 4Ri/(πd²), cm = Cm·πd (Hodgkin & Rushton 1946; Rall 1977).
    """
    d_cm = np.asarray(diameter_um, dtype=float) / UM_PER_CM
    return {
        "rm_ohm_cm": rm_ohm_cm2 / (math.pi * d_cm),
        "ri_ohm_per_cm": 4.0 * ri_ohm_cm / (math.pi * d_cm**2),
        "cm_uF_per_cm": cm_uF_cm2 * math.pi * d_cm,
    }


def space_constant_um(diameter_um, rm_ohm_cm2, ri_ohm_cm):
    """DC space constant λ = √(rm/ri) = √(Rm·d/(4Ri)) of a uniform cylinder, in µm.

    Parameters
    ----------
    diameter_um : float or array
        Cylinder diameter d (µm).
    rm_ohm_cm2 : float
        Specific membrane resistance Rm (Ω·cm²).
    ri_ohm_cm : float
        Axial resistivity Ri (Ω·cm).

    Returns
    -------
    float or ndarray
        λ (µm), the shape of ``diameter_um``.

    Notes
    -----
    From the per-unit-length constants of :func:`per_unit_length` (Hodgkin & Rushton 1946; Rall
    1977; Johnston & Wu 1995, Foundations of Cellular Neurophysiology, ch. 4). Assumes a passive,
    uniform membrane and an isopotential cross-section (core conductor), the outside grounded.
    d = 1 µm, Rm = 20 000 Ω·cm², Ri = 200 Ω·cm gives λ = 500 µm (docs/checks.md C2).

    Examples
    --------
    >>> round(float(space_constant_um(1.0, 20000.0, 200.0)), 6)
    500.0
    """
    d_cm = np.asarray(diameter_um, dtype=float) / UM_PER_CM
    return np.sqrt(rm_ohm_cm2 * d_cm / (4.0 * ri_ohm_cm)) * UM_PER_CM


def membrane_time_constant_ms(rm_ohm_cm2, cm_uF_cm2):
    """Membrane time constant τm = Rm·Cm, in ms.

    Parameters
    ----------
    rm_ohm_cm2 : float or array
        Specific membrane resistance Rm (Ω·cm²).
    cm_uF_cm2 : float or array
        Specific membrane capacitance Cm (µF/cm²).

    Returns
    -------
    float or ndarray
        τm (ms): Ω·cm² × µF/cm² = µs, hence the factor 1e-3.

    Notes
    -----
    τm = rm·cm for the per-unit-length constants, independent of the diameter (Rall 1977); a
    passive membrane with one uniform Rm and Cm.

    Examples
    --------
    Check C3 of docs/checks.md:

    >>> membrane_time_constant_ms(20000.0, 1.0)
    20.0
    """
    return rm_ohm_cm2 * cm_uF_cm2 * 1.0e-3


def input_resistance_infinite_Mohm(diameter_um, rm_ohm_cm2, ri_ohm_cm):
    """Input resistance of a semi-infinite cylinder, R∞ = √(rm·ri) = (2/π)√(Rm·Ri)·d^(−3/2), in MΩ.

    Parameters
    ----------
    diameter_um : float or array
        Cylinder diameter d (µm).
    rm_ohm_cm2 : float
        Specific membrane resistance Rm (Ω·cm²).
    ri_ohm_cm : float
        Axial resistivity Ri (Ω·cm).

    Returns
    -------
    float or ndarray
        R∞ (MΩ), the shape of ``diameter_um``; also the characteristic resistance λ·ri that sets
        every cylinder's admittance scale in the tree passes.

    Notes
    -----
    Rall 1959, Exp Neurol 1:491; Jack, Noble & Tsien 1975. Steady current into one end of a
    passive cylinder that goes on for ever with the same diameter.

    Examples
    --------
    The cable of check C2 (d = 1 µm, Rm = 20 000 Ω·cm², Ri = 200 Ω·cm; docs/checks.md C4):

    >>> round(float(input_resistance_infinite_Mohm(1.0, 20000.0, 200.0)), 4)
    1273.2395
    """
    d_cm = np.asarray(diameter_um, dtype=float) / UM_PER_CM
    return (2.0 / math.pi) * math.sqrt(rm_ohm_cm2 * ri_ohm_cm) * d_cm**-1.5 * 1.0e-6


def ac_space_constant_um(diameter_um, rm_ohm_cm2, ri_ohm_cm, cm_uF_cm2, freq_hz):
    """AC space constant λ_AC = 1/Re(q), q = √(1 + iωτ)/λ, in µm.

    Equivalently λ_AC = λ·√(2/(1 + √(1 + (ωτ)²))): the distance over which a sinusoid of
    frequency f decays e-fold on a semi-infinite cylinder.

    Parameters
    ----------
    diameter_um : float or array
        Cylinder diameter d (µm).
    rm_ohm_cm2 : float
        Specific membrane resistance Rm (Ω·cm²).
    ri_ohm_cm : float
        Axial resistivity Ri (Ω·cm).
    cm_uF_cm2 : float
        Specific membrane capacitance Cm (µF/cm²).
    freq_hz : float or array
        Frequency f (Hz); ω = 2πf.

    Returns
    -------
    float or ndarray
        λ_AC (µm); λ at 0 Hz.

    Notes
    -----
    Derived from the cable equation with V ∝ e^{iωt}; discussed in Koch 1999, Biophysics of
    Computation ch. 2, and Zador, Agmon-Snir & Segev 1995, J Neurosci 15:1669 (check F1).

    Examples
    --------
    λ_AC/λ = 0.876053 at 10 Hz for τm = 20 ms (docs/checks.md F1):

    >>> round(float(ac_space_constant_um(1.0, 20000.0, 200.0, 1.0, 10.0)) / 500.0, 6)
    0.876053
    """
    lambda_um = space_constant_um(diameter_um, rm_ohm_cm2, ri_ohm_cm)
    omega_tau = 2.0 * math.pi * np.asarray(freq_hz, dtype=float) * 1.0e-3 * membrane_time_constant_ms(
        rm_ohm_cm2, cm_uF_cm2
    )
    return lambda_um * np.sqrt(2.0 / (1.0 + np.sqrt(1.0 + omega_tau**2)))


def sphere_input_resistance_Mohm(diameter_um, rm_ohm_cm2):
    """Input resistance of an isopotential sphere, R = Rm/(πD²), in MΩ.

    Parameters
    ----------
    diameter_um : float or array
        Sphere diameter D (µm); membrane area πD².
    rm_ohm_cm2 : float
        Specific membrane resistance Rm (Ω·cm²).

    Returns
    -------
    float or ndarray
        R (MΩ).

    Notes
    -----
    Basic membrane theory (e.g. Johnston & Wu 1995 ch. 2), for a soma small enough to be
    isopotential. D = 20 µm, Rm = 20 000 Ω·cm² gives 1591.549 MΩ (docs/checks.md C5).

    Examples
    --------
    >>> round(float(sphere_input_resistance_Mohm(20.0, 20000.0)), 3)
    1591.549
    """
    area_cm2 = math.pi * (np.asarray(diameter_um, dtype=float) / UM_PER_CM) ** 2
    return rm_ohm_cm2 / area_cm2 * 1.0e-6


def sphere_capacitance_pF(diameter_um, cm_uF_cm2):
    """Capacitance of an isopotential sphere of diameter D, C = Cm·πD², in pF.

    Parameters
    ----------
    diameter_um : float or array
        Sphere diameter D (µm); membrane area πD².
    cm_uF_cm2 : float
        Specific membrane capacitance Cm (µF/cm²).

    Returns
    -------
    float or ndarray
        C (pF).

    Notes
    -----
    Basic membrane theory (e.g. Johnston & Wu 1995 ch. 2).

    Examples
    --------
    >>> round(float(sphere_capacitance_pF(20.0, 1.0)), 4)     # π·(20 µm)² × 1 µF/cm²
    12.5664
    """
    area_cm2 = math.pi * (np.asarray(diameter_um, dtype=float) / UM_PER_CM) ** 2
    return cm_uF_cm2 * area_cm2 * 1.0e6
