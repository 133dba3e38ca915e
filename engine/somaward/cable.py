"""One uniform cylinder: its ends, the admittance it presents, and the voltage ratio along it.

A cylinder of electrotonic length L carrying V ∝ e^{st} obeys the Laplace-transformed cable
equation d²V/dX² = k²V with k = √(1 + sτ) (Rall 1959, Exp Neurol 1:491; Rall 1977). Its
characteristic admittance is Y0 = k/R∞. Loaded at its distal end by an admittance YL, write the
distal end's reflection coefficient

    Γ = (Y0 − YL) / (Y0 + YL)        sealed: Γ = 1, killed: Γ = −1, semi-infinite: Γ = 0,

so that the voltage at electrotonic distance Y from the proximal end, relative to the proximal
end, is

    V(Y)/V(0) = e^{−kY} · (1 + Γ e^{−2k(L−Y)}) / (1 + Γ e^{−2kL})

and the admittance seen at the proximal end is

    Yin = Y0 · (1 − Γ e^{−2kL}) / (1 + Γ e^{−2kL})      (= Y0·tanh(kL) when sealed).

These are the usual cosh/sinh forms (Rall 1977) rewritten so that no term grows: with Re k ≥ 1
and |Γ| ≤ 1 every factor stays bounded for any L and frequency, and log-attenuations are sums of
logarithms, never logarithms of underflowed ratios. 1 ± Γ are carried separately
(1 + Γ = 2Y0/(Y0 + YL), 1 − Γ = 2YL/(Y0 + YL)) and e^{−2kL} as 1 + expm1(−2kL), so short
cylinders and near-killed loads keep full relative precision.

A load is passed as a homogeneous pair (num, den), YL = num/den, so that a killed end is
(1, 0) and needs no special case.
"""

import numpy as np

__all__ = ["reflection", "through_admittance", "log_voltage_ratio", "cylinder_input_resistance_Mohm"]


def reflection(y0, load_num, load_den=1.0):
    """Reflection terms (Γ, 1 + Γ, 1 − Γ) of a load YL = num/den on a cable of admittance Y0.

    Γ = (Y0 − YL)/(Y0 + YL) (module docstring; Rall 1959's end conditions in reflection form):
    1 for a sealed end (YL = 0), −1 for a killed end (YL = ∞), 0 for a matched, semi-infinite
    continuation (YL = Y0). 1 ± Γ are returned separately so that neither loses precision near ∓1.

    Parameters
    ----------
    y0 : complex or float array
        Characteristic admittance Y0 = k/R∞ of the cylinder (µS in the engine; any admittance unit,
        the same for the load).
    load_num : array
        Numerator of the load admittance YL (same unit as ``y0``).
    load_den : array or float, default 1.0
        Denominator of YL (dimensionless); 0 is a killed end (YL = ∞).

    Returns
    -------
    gamma, one_plus_gamma, one_minus_gamma : ndarray
        Γ, 1 + Γ = 2Y0/(Y0 + YL) and 1 − Γ = 2YL/(Y0 + YL) (dimensionless), broadcast together.

    Examples
    --------
    >>> import numpy as np
    >>> [float(v[0]) for v in reflection(np.array([2.0]), np.array([0.0]))]          # sealed
    [1.0, 2.0, 0.0]
    >>> [float(v[0]) for v in reflection(np.array([2.0]), np.array([1.0]), 0.0)]     # killed
    [-1.0, 0.0, 2.0]
    """
    y0d = y0 * load_den
    inv = 1.0 / (y0d + load_num)          # one division, three products
    return (y0d - load_num) * inv, 2.0 * y0d * inv, 2.0 * load_num * inv


def through_admittance(y0, gamma, one_minus_gamma, one_plus_gamma, kappa_m1):
    """Admittance seen through a cylinder of its distal load: Y0(1 − Γe^{−2κ})/(1 + Γe^{−2κ}).

    The bounded form of Rall 1959's input admittance of a loaded cylinder (Y0·tanh κ when
    sealed, Y0·coth κ when killed, Y0 when semi-infinite), κ = kL.

    Parameters
    ----------
    y0 : complex or float array
        Characteristic admittance Y0 of the cylinder (µS in the engine).
    gamma : array
        Γ of the load seen at the far end (dimensionless).
    one_minus_gamma, one_plus_gamma : array
        1 − Γ and 1 + Γ, carried separately (see :func:`reflection`).
    kappa_m1 : array
        e^{−2κ} − 1 = expm1(−2κ), κ = kL the complex electrotonic length of the cylinder.

    Returns
    -------
    ndarray
        The admittance at the near end (unit of ``y0``).

    Examples
    --------
    A sealed cylinder of L = 1 at 0 Hz: Y0·tanh(1).

    >>> import math
    >>> m = math.expm1(-2.0)
    >>> round(float(through_admittance(1.0, 1.0, 0.0, 2.0, m)), 12) == round(math.tanh(1.0), 12)
    True
    """
    return y0 * (one_minus_gamma - gamma * kappa_m1) / (one_plus_gamma + gamma * kappa_m1)


def log_voltage_ratio(kappa_y, gamma, one_plus_gamma, rest_m1, whole_m1):
    """ln(V(Y)/V(0)) = −kY + ln(1 + Γe^{−2k(L−Y)}) − ln(1 + Γe^{−2kL}) along a loaded cylinder.

    The proximal end (Y = 0) is where the current enters; the result is ≤ 0 in real part and
    −inf only at a killed end. Rall 1977's cosh/sinh form rewritten with the distal reflection
    coefficient, so nothing overflows for any L or frequency (module docstring).

    Parameters
    ----------
    kappa_y : array
        kY, the complex electrotonic distance of the point from the proximal end.
    gamma : array
        Γ of the distal load (dimensionless).
    one_plus_gamma : array
        1 + Γ.
    rest_m1 : array
        expm1(−2k(L − Y)), for the rest of the cylinder beyond the point.
    whole_m1 : array
        expm1(−2kL), for the whole cylinder.

    Returns
    -------
    ndarray
        ln of the voltage ratio (real part in nepers, imaginary part the phase in radians).

    Examples
    --------
    The far end of a sealed cylinder of L = 1 at 0 Hz: V(L)/V(0) = 1/cosh(1) = 0.648054 (check S2).

    >>> import math
    >>> round(math.exp(float(log_voltage_ratio(1.0, 1.0, 2.0, 0.0, math.expm1(-2.0)))), 6)
    0.648054
    """
    with np.errstate(divide="ignore"):
        return (
            -kappa_y
            + np.log(one_plus_gamma + gamma * rest_m1)
            - np.log(one_plus_gamma + gamma * whole_m1)
        )


def cylinder_input_resistance_Mohm(r_inf_Mohm, electrotonic_length, end="sealed"):
    """DC input resistance at X = 0 of one cylinder with no soma (Rall 1959; Rall 1977).

    sealed: R∞·coth(L); killed: R∞·tanh(L); infinite: R∞.

    Parameters
    ----------
    r_inf_Mohm : float
        R∞ of the cylinder (MΩ), from :func:`somaward.membrane.input_resistance_infinite_Mohm`.
    electrotonic_length : float
        L = ℓ/λ of the cylinder (dimensionless).
    end : {"sealed", "killed", "infinite"}, default "sealed"
        Condition at the far end.

    Returns
    -------
    float
        Input resistance (MΩ).

    Examples
    --------
    The C2 cable, 500 µm long (L = 1), sealed: R∞·coth(1) = 1671.81 MΩ.

    >>> round(float(cylinder_input_resistance_Mohm(1273.2395447351628, 1.0)), 2)
    1671.81
    """
    electrotonic_length = float(electrotonic_length)
    if end == "sealed":
        return r_inf_Mohm / np.tanh(electrotonic_length)
    if end == "killed":
        return r_inf_Mohm * np.tanh(electrotonic_length)
    if end == "infinite":
        return r_inf_Mohm
    raise ValueError(f"end: must be 'sealed', 'killed' or 'infinite', got {end!r}")
