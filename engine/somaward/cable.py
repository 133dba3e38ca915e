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

    Parameters
    ----------
    y0 : complex array
        Characteristic admittance k/R∞ of the cylinder (µS).
    load_num, load_den : array
        The load admittance as a homogeneous pair; den = 0 is a killed end (YL = ∞).
    """
    y0d = y0 * load_den
    inv = 1.0 / (y0d + load_num)          # one division, three products
    return (y0d - load_num) * inv, 2.0 * y0d * inv, 2.0 * load_num * inv


def through_admittance(y0, gamma, one_minus_gamma, one_plus_gamma, kappa_m1):
    """Admittance seen through a cylinder of its distal load: Y0(1 − Γe^{−2κ})/(1 + Γe^{−2κ}).

    ``kappa_m1`` is expm1(−2κ) with κ = kL (complex electrotonic length).
    """
    return y0 * (one_minus_gamma - gamma * kappa_m1) / (one_plus_gamma + gamma * kappa_m1)


def log_voltage_ratio(kappa_y, gamma, one_plus_gamma, rest_m1, whole_m1):
    """ln(V(Y)/V(0)) = −kY + ln(1 + Γe^{−2k(L−Y)}) − ln(1 + Γe^{−2kL}).

    ``rest_m1`` = expm1(−2k(L−Y)), ``whole_m1`` = expm1(−2kL). The proximal end is the end
    where current enters; the result is ≤ 0 in real part and −inf only at a killed end.
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
    """
    electrotonic_length = float(electrotonic_length)
    if end == "sealed":
        return r_inf_Mohm / np.tanh(electrotonic_length)
    if end == "killed":
        return r_inf_Mohm * np.tanh(electrotonic_length)
    if end == "infinite":
        return r_inf_Mohm
    raise ValueError(f"end: must be 'sealed', 'killed' or 'infinite', got {end!r}")
