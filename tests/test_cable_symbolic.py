"""C6 of docs/checks.md: sympy verifies the closed forms of one cylinder symbolically.

Independent library: sympy. In electrotonic units (X = x/λ) the Laplace-transformed cable
equation is d²V/dX² = k²V with k = √(1 + sτ) (Rall 1959, Exp Neurol 1:491; Rall 1977); at DC
k = 1. The axial current is I = −(1/(ri·λ)) dV/dX = −(1/R∞) dV/dX (R∞ = ri·λ, Rall 1959), so a
load admittance YL at X = L requires −V'(L)/R∞ = YL·V(L): sealed is V'(L) = 0, killed V(L) = 0.

The engine (cable.py) writes the bounded form
    V(Y)/V(0) = e^{−kY}(1 + Γe^{−2k(L−Y)})/(1 + Γe^{−2kL}),   Γ = (Y0 − YL)/(Y0 + YL), Y0 = k/R∞,
and Yin = Y0(1 − Γe^{−2kL})/(1 + Γe^{−2kL}). These tests check that it solves the cable equation
with the load condition, equals the cosh/sinh form (Rall 1977)
    V(Y)/V(0) = [cosh k(L−Y) + (YL R∞/k) sinh k(L−Y)] / [cosh kL + (YL R∞/k) sinh kL],
reduces to the sealed, killed and semi-infinite forms, and that the engine's numerical functions
agree with mpmath's 30-digit evaluation of these forms.
"""

import cmath
import random

import mpmath
import numpy as np
import pytest
import sympy as sp

from somaward import cable

X, Y, L, R, YL = sp.symbols("X Y L R_inf Y_L", positive=True)
S, TAU = sp.symbols("s tau", positive=True)
K = sp.sqrt(1 + S * TAU)


def _zero(expr, subs_points=8):
    """expr ≡ 0 symbolically: written in exponentials over one denominator, the expanded
    numerator must vanish identically (sympy). Only if that fails is expr evaluated at random
    rational points with 30 digits, as a fallback when sympy does not find the cancellation."""
    num, _ = sp.fraction(sp.together(expr.rewrite(sp.exp)))
    if sp.expand(sp.powsimp(sp.expand(num))) == 0:
        return True
    rng = random.Random(1)
    syms = sorted(expr.free_symbols, key=str)
    for _ in range(subs_points):
        point = {v: sp.Rational(rng.randint(1, 400), 97) for v in syms}
        if abs(sp.N(expr.subs(point), 30)) > sp.Float("1e-25"):
            return False
    return True


CLOSED = {
    "sealed": (sp.cosh(L - X) / sp.cosh(L), "sealed"),       # Rall 1959; Rall 1977
    "killed": (sp.sinh(L - X) / sp.sinh(L), "killed"),       # Rall 1977
    "infinite": (sp.exp(-X), None),                          # Rall 1977
}


@pytest.mark.parametrize("name", CLOSED)
@pytest.mark.parametrize("laplace", [False, True], ids=["dc", "laplace_k"])
def test_c6_closed_forms_solve_cable_equation(name, laplace):
    """C6 — each closed form (Rall 1977) solves V'' = k²V, V(0) = 1 and its end condition (sympy).

    The Laplace-domain version replaces X by kX (and L by kL), k = √(1+sτ) (Rall 1959).
    """
    form, end = CLOSED[name]
    k = K if laplace else sp.Integer(1)
    v = form.subs({X: k * X, L: k * L}, simultaneous=True)
    assert _zero(sp.diff(v, X, 2) - k**2 * v)
    assert sp.simplify(v.subs(X, 0) - 1) == 0
    if end == "sealed":
        assert _zero(sp.diff(v, X).subs(X, L))
    elif end == "killed":
        assert sp.simplify(v.subs(X, L)) == 0
    else:
        assert sp.limit(v.subs({S: 1, TAU: 1}), X, sp.oo) == 0


def _bounded(gamma, k=K):
    """The engine's bounded form (cable.py docstring)."""
    return sp.exp(-k * Y) * (1 + gamma * sp.exp(-2 * k * (L - Y))) / (1 + gamma * sp.exp(-2 * k * L))


def test_c6_bounded_form_solves_cable_equation_with_load():
    """C6 — the bounded form with Γ = (Y0−YL)/(Y0+YL) solves V'' = k²V, V(0) = 1 and
    −V'(L)/R∞ = YL·V(L) (derived; sympy)."""
    y0 = K / R
    gamma = (y0 - YL) / (y0 + YL)
    v = _bounded(gamma)
    assert _zero(sp.diff(v, Y, 2) - K**2 * v)
    assert sp.simplify(v.subs(Y, 0) - 1) == 0
    assert _zero(-sp.diff(v, Y).subs(Y, L) / R - YL * v.subs(Y, L))


def test_c6_bounded_form_equals_cosh_sinh_form():
    """C6 — bounded form ≡ [cosh k(L−Y) + (YL R∞/k) sinh k(L−Y)]/[cosh kL + (YL R∞/k) sinh kL]
    (Rall 1977), and the input admittance −V'(0)/R∞ equals Y0(1−Γe^{−2kL})/(1+Γe^{−2kL}) (sympy)."""
    y0 = K / R
    gamma = (y0 - YL) / (y0 + YL)
    g = YL * R / K
    rall = (sp.cosh(K * (L - Y)) + g * sp.sinh(K * (L - Y))) / (sp.cosh(K * L) + g * sp.sinh(K * L))
    assert _zero(_bounded(gamma) - rall)
    yin = y0 * (1 - gamma * sp.exp(-2 * K * L)) / (1 + gamma * sp.exp(-2 * K * L))
    assert _zero(-sp.diff(rall, Y).subs(Y, 0) / R - yin)
    # and the textbook input admittance Y0 (tanh kL + g)/(1 + g tanh kL) (Rall 1959)
    assert _zero(yin - y0 * (sp.tanh(K * L) + g) / (1 + g * sp.tanh(K * L)))


@pytest.mark.parametrize("gamma, name", [(1, "sealed"), (-1, "killed"), (0, "infinite")])
def test_c6_bounded_form_special_ends(gamma, name):
    """C6 — Γ = 1 (YL = 0), −1 (YL → ∞), 0 (YL = Y0) give Rall 1977's sealed, killed and
    semi-infinite forms, in the Laplace domain (sympy)."""
    form = CLOSED[name][0].subs({X: K * Y, L: K * L}, simultaneous=True)
    assert _zero(_bounded(sp.Integer(gamma)) - form)


def _mp_terms(k, big_l, y, r_inf, load):
    """30-digit cosh/sinh forms (Rall 1977, Rall 1959) for a load YL (None = killed), mpmath:
    V(Y)/V(0) and the input admittance (µS for MΩ)."""
    with mpmath.workdps(30):
        k, big_l, y, r_inf = mpmath.mpc(k), mpmath.mpf(big_l), mpmath.mpf(y), mpmath.mpf(r_inf)
        y0 = k / r_inf
        if load is None:
            return mpmath.sinh(k * (big_l - y)) / mpmath.sinh(k * big_l), y0 / mpmath.tanh(k * big_l)
        g = mpmath.mpc(load) * r_inf / k
        ratio = ((mpmath.cosh(k * (big_l - y)) + g * mpmath.sinh(k * (big_l - y)))
                 / (mpmath.cosh(k * big_l) + g * mpmath.sinh(k * big_l)))
        t = mpmath.tanh(k * big_l)
        return ratio, y0 * (t + g) / (1 + g * t)


@pytest.mark.parametrize("seed", range(12))
def test_engine_cable_functions_match_mpmath(seed):
    """The engine's reflection / log_voltage_ratio / through_admittance equal mpmath's 30-digit
    cosh/sinh forms (Rall 1977) at random k = √(1+iωτ), L, Y and loads (sealed, resistive,
    resistive + capacitive, killed), rel 1e-12 (independent library: mpmath). The engine's log
    is unwrapped (a sum of logs), so its phase is compared modulo 2π."""
    rng = random.Random(seed)
    wt = rng.choice([0.0, rng.uniform(0.01, 3.0), rng.uniform(3.0, 600.0)])
    k = cmath.sqrt(1 + 1j * wt)
    big_l = rng.uniform(0.05, 4.0)
    y = rng.uniform(0.0, big_l * 0.95)
    r_inf = rng.uniform(50.0, 3000.0)
    y0 = np.array([k / r_inf])
    loads = [0.0, rng.uniform(0.1, 3.0) / r_inf, (0.3 + 1j * wt * rng.uniform(0.0, 0.5)) / r_inf, None]
    for load in loads:
        num, den = (np.array([1.0 + 0j]), 0.0) if load is None else (np.array([complex(load)]), 1.0)
        gam, opg, omg = cable.reflection(y0, num, den)
        m_whole = np.array([np.expm1(-2 * k * big_l)])
        m_rest = np.array([np.expm1(-2 * k * (big_l - y))])
        got = complex(cable.log_voltage_ratio(np.array([k * y]), gam, opg, m_rest, m_whole)[0])
        ratio, yin_ref = _mp_terms(k, big_l, y, r_inf, load)
        assert abs(cmath.exp(got - complex(mpmath.log(ratio))) - 1) < 1e-12, (load, got, ratio)
        yin = complex(cable.through_admittance(y0, gam, omg, opg, m_whole)[0])
        assert abs(yin / complex(yin_ref) - 1) < 1e-12, (load, yin, yin_ref)


@pytest.mark.parametrize("end, ref", [
    ("sealed", lambda L: 1 / np.tanh(L)),      # R∞ coth L (Rall 1959)
    ("killed", lambda L: np.tanh(L)),          # R∞ tanh L (Rall 1977)
    ("infinite", lambda _L: 1.0),              # R∞ (Rall 1977)
])
def test_cylinder_input_resistance_closed_forms(end, ref):
    """cable.cylinder_input_resistance_Mohm against sympy's evaluation of the same closed forms."""
    for big_l in (0.1, 1.0, 3.0):
        sym = {"sealed": sp.coth, "killed": sp.tanh, "infinite": lambda _v: 1}[end](sp.nsimplify(big_l))
        got = float(cable.cylinder_input_resistance_Mohm(700.0, big_l, end))
        assert got == pytest.approx(700.0 * float(sp.N(sym, 30)), rel=1e-13)
        assert got == pytest.approx(700.0 * ref(big_l), rel=1e-13)


def test_c6_checker_rejects_wrong_forms():
    """The symbolic check can fail: Γ with the wrong sign breaks the load condition, and
    cosh(L+X)/cosh L breaks the sealed end (derived)."""
    y0 = K / R
    wrong = _bounded((YL - y0) / (y0 + YL))
    assert not _zero(-sp.diff(wrong, Y).subs(Y, L) / R - YL * wrong.subs(Y, L))
    v = sp.cosh(L + X) / sp.cosh(L)
    assert not _zero(sp.diff(v, X).subs(X, L))
