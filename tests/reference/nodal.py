"""Independent reference: passive dendritic trees by nodal analysis with exact two-ports (S10).

Method
------
Written from the scenario dict alone (nothing here imports ``somaward``). Every section, a
cylinder of uniform diameter d and length l, is replaced by its exact two-port: with the Laplace
variable s,

    q   = sqrt(1 + s*tau) / lambda                       (tau = Rm*Cm, lambda^2 = rm/ri)
    Y11 = Y22 = q*coth(q*l) / ri,     Y12 = Y21 = -q / (ri*sinh(q*l)),

per unit length rm = Rm/(pi*d), ri = 4*Ri/(pi*d^2), cm = Cm*pi*d. This is the solution of the
cable equation lambda^2 V'' - tau dV/dt - V = 0 (Hodgkin & Rushton 1946, Proc R Soc B 133:444;
Rall 1959, Exp Neurol 1:491; Rall 1977, Handbook of Physiology sec. 1 vol. 1) written as the
admittance matrix of a uniform transmission line. The two-ports are stamped into the nodal
admittance matrix of the whole tree. Nodes: the soma (or root) node, every section end, and an
extra node wherever a site of interest lies inside a section (the section is split there; splitting
is exact). The soma is the lumped admittance G_s*(1 + s*tau_soma), G_s = pi*D^2/Rm_soma,
capacitance Cm*pi*D^2. Terminal conditions: sealed (nothing stamped), killed (the node is ground,
V = 0, and is removed from the matrix), infinite (the admittance of the semi-infinite cylinder of
the same diameter, q/ri = sqrt(1 + s*tau)/R_inf, at the terminal node), lumped load G + s*C. A unit
current is injected at one node and ``mpmath.lu_solve`` gives every node voltage (mp.dps >= 30).

Units used inside: um, ms (s in 1/ms), MOhm, uS, nF, nA, mV. Conversions from the scenario units
(Rm Ohm*cm^2, Ri Ohm*cm, Cm uF/cm^2, diameters um, G nS, C pF, f Hz):
lambda_um = 100*sqrt(Rm*d/(4*Ri)), ri_Mohm_per_um = 0.01*4*Ri/(pi*d^2), tau_ms = 1e-3*Rm*Cm,
G_soma_uS = 0.01*pi*D^2/Rm_soma, C_soma_nF = 1e-5*Cm*pi*D^2, s = 2*pi*i*f/1000.

Phase
-----
The engine reports the phase unwrapped, summed along the path. The reference computes it the
same way in spirit but by its own means: along each section of the path the exact voltage
profile between the two solved end voltages, V(x) = (V_a sinh(q(l-x)) + V_b sinh(q x))/sinh(q l)
(no current enters inside a section), is sampled finely enough that successive samples differ
in argument by well under pi; the sum of the arguments of the successive ratios fixes the
multiple of 2*pi, and the exact argument of V_end/V_start of the section supplies the value.
The result is the continuous (unwrapped) phase of V along the path, in radians.

Centroid delays (Agmon-Snir & Segev 1993, J Neurophysiol 70:2066) are -d/ds ln A(s) at s = 0,
taken by ``mpmath.diff`` of the nodal solution at real s.
"""

from __future__ import annotations

import math

import mpmath
from mpmath import mp

__all__ = ["NodalTree", "membrane_constants", "DEFAULT_DPS"]

DEFAULT_DPS = 30
_MATCH_UM = 1e-9  # two positions on a branch closer than this (um) are the same node


def membrane_constants(rm_ohm_cm2, ri_ohm_cm, cm_uF_cm2, diameter_um):
    """lambda (um), ri (MOhm/um), tau (ms) and R_inf (MOhm) of a cylinder (Rall 1959; 1977)."""
    rm_ohm_cm2, ri_ohm_cm, cm_uF_cm2, d = (mp.mpf(v) for v in (rm_ohm_cm2, ri_ohm_cm, cm_uF_cm2, diameter_um))
    lam = 100 * mp.sqrt(rm_ohm_cm2 * d / (4 * ri_ohm_cm))
    ri_Mohm_per_um = mp.mpf("0.01") * 4 * ri_ohm_cm / (mp.pi * d**2)
    tau = rm_ohm_cm2 * cm_uF_cm2 / 1000
    return {"lambda_um": lam, "ri_Mohm_per_um": ri_Mohm_per_um, "tau_ms": tau, "r_inf_Mohm": lam * ri_Mohm_per_um}


def _sections_of(branch):
    if "cylinders" in branch and branch["cylinders"] is not None:
        return [(mp.mpf(s["length"]), mp.mpf(s["diameter"])) for s in branch["cylinders"]]
    return [(mp.mpf(branch["length"]), mp.mpf(branch["diameter"]))]


class _Edge:
    __slots__ = ("a", "b", "length", "diameter", "branch", "start")

    def __init__(self, a, b, length, diameter, branch, start):
        self.a, self.b = a, b  # proximal node, distal node (None: grounded, killed end)
        self.length, self.diameter = length, diameter
        self.branch, self.start = branch, start  # branch id, distance of a from branch start


class NodalTree:
    """Nodal-admittance model of one scenario's tree.

    Parameters
    ----------
    scenario : dict
        A scenario in the contract of DEVELOPERS.md (``membrane``, ``soma``, ``branches``).
    sites : iterable of (branch_id, distance_um)
        Points at which nodes are placed (sections are split there) so that they can be
        used as injection or recording sites. Section ends need not be listed.
    dps : int
        mpmath decimal precision (default 30).
    """

    def __init__(self, scenario, sites=(), dps=DEFAULT_DPS):
        self.dps = dps
        with mp.workdps(dps):
            mem = scenario["membrane"]
            self.rm_ohm_cm2, self.ri_ohm_cm, self.cm_uF_cm2 = (mp.mpf(mem[k]) for k in ("Rm", "Ri", "Cm"))
            self.tau_ms = self.rm_ohm_cm2 * self.cm_uF_cm2 / 1000
            soma = scenario.get("soma")
            self.has_soma = soma is not None
            if self.has_soma:
                D = mp.mpf(soma["diameter"])
                soma_rm_ohm_cm2 = mp.mpf(soma.get("Rm", mem["Rm"]))
                self.soma_diameter = D
                self.soma_rm_ohm_cm2 = soma_rm_ohm_cm2
                self.G_soma_uS = mp.mpf("0.01") * mp.pi * D**2 / soma_rm_ohm_cm2
                self.C_soma_nF = mp.mpf("1e-5") * self.cm_uF_cm2 * mp.pi * D**2
            self.branches = {b["id"]: b for b in scenario["branches"]}
            self._build(scenario["branches"], list(sites))
        self._cache = {}

    # ------------------------------------------------------------------ geometry
    def _build(self, branch_list, sites):
        children = {}
        for b in branch_list:
            children.setdefault(b["parent"], []).append(b["id"])
        splits = {}
        for br, dist in sites:
            splits.setdefault(br, []).append(mp.mpf(dist))
        self.edges, self.parent_edge, self.shunts = [], {}, {}
        self.node_at = {}  # branch id -> list of (distance, node or None)
        self.distal_node = {}
        self.n_nodes = 1  # node 0: soma or root
        self.stems = list(children.get(None, []))
        order = list(self.stems)  # iterative, parents first
        i = 0
        while i < len(order):
            order.extend(children.get(order[i], []))
            i += 1
        for bid in order:
            b = self.branches[bid]
            prox = 0 if b["parent"] is None else self.distal_node[b["parent"]]
            self._build_branch(b, prox, splits.get(bid, []), bid not in children)

    def _build_branch(self, b, prox, split_list, terminal):
        secs = _sections_of(b)
        bounds, acc = [], mp.mpf(0)
        for length, _ in secs[:-1]:
            acc += length
            bounds.append(acc)
        total = acc + secs[-1][0]
        cuts = sorted(set(bounds) | {d for d in split_list if 0 < d < total})
        merged = []
        for c in cuts:
            if not merged or abs(c - merged[-1]) > _MATCH_UM:
                merged.append(c)
        merged = [c for c in merged if abs(c - total) > _MATCH_UM]
        points = [mp.mpf(0)] + merged + [total]
        end = b.get("end", "sealed") if terminal else "sealed"
        self.node_at[b["id"]] = [(mp.mpf(0), prox)]
        node = prox
        for k in range(1, len(points)):
            x0, x1 = points[k - 1], points[k]
            mid = (x0 + x1) / 2
            acc, diam = mp.mpf(0), secs[-1][1]
            for length, d in secs:
                if mid < acc + length:
                    diam = d
                    break
                acc += length
            last = k == len(points) - 1
            if last and end == "killed":
                nxt = None
            else:
                nxt = self.n_nodes
                self.n_nodes += 1
            e = _Edge(node, nxt, x1 - x0, diam, b["id"], x0)
            self.edges.append(e)
            if nxt is not None:
                self.parent_edge[nxt] = e
            self.node_at[b["id"]].append((x1, nxt))
            node = nxt
        self.distal_node[b["id"]] = node
        if terminal and node is not None:
            if end == "infinite":
                self.shunts[node] = ("infinite", secs[-1][1])
            elif isinstance(end, dict):
                self.shunts[node] = ("load", mp.mpf(end["G"]), mp.mpf(end["C"]))

    def node(self, site):
        """Node index of ``"soma"`` / ``"root"`` or of (branch_id, distance_um)."""
        if site in ("soma", "root"):
            return 0
        br, dist = site
        dist = mp.mpf(dist)
        for x, n in self.node_at[br]:
            if abs(x - dist) <= _MATCH_UM:
                if n is None:
                    raise ValueError(f"site {site} is at a killed end (V = 0)")
                return n
        raise KeyError(f"no node at {site}: pass it in `sites` when building the tree")

    def path_edges(self, node):
        """Edges from node 0 down to ``node``, in order from the soma/root."""
        out = []
        while node != 0:
            e = self.parent_edge[node]
            out.append(e)
            node = e.a
        return out[::-1]

    def path_distance_um(self, node):
        return mp.fsum(e.length for e in self.path_edges(node))

    def electrotonic_distance(self, node):
        """X = sum of l_i/lambda_i along the path from the soma/root (Rall 1977)."""
        with mp.workdps(self.dps):
            return mp.fsum(e.length / self._lam(e.diameter) for e in self.path_edges(node))

    def site_from_path(self, terminal, path_distance_um):
        """(branch, distance) of the point at ``path_distance_um`` on the way to ``terminal``."""
        chain, bid = [], terminal
        while bid is not None:
            chain.append(bid)
            bid = self.branches[bid]["parent"]
        rest = mp.mpf(path_distance_um)
        for bid in reversed(chain):
            total = mp.fsum(length for length, _ in _sections_of(self.branches[bid]))
            if rest <= total + _MATCH_UM:
                return bid, rest
            rest -= total
        raise ValueError("path_distance beyond the terminal")

    # ------------------------------------------------------------------ physics
    def _lam(self, d):
        return 100 * mp.sqrt(self.rm_ohm_cm2 * d / (4 * self.ri_ohm_cm))

    def _ri(self, d):
        return mp.mpf("0.01") * 4 * self.ri_ohm_cm / (mp.pi * d**2)

    def r_inf_Mohm(self, d):
        with mp.workdps(self.dps):
            d = mp.mpf(d)
            return self._lam(d) * self._ri(d)

    @staticmethod
    def s_of(freq_hz):
        """Laplace variable s = i*2*pi*f in 1/ms for f in Hz."""
        return mp.mpc(0, 2 * mp.pi * mp.mpf(freq_hz) / 1000)

    def _q(self, s, d):
        return mp.sqrt(1 + s * self.tau_ms) / self._lam(d)

    def matrix(self, s):
        """Nodal admittance matrix (uS) at Laplace variable s (1/ms)."""
        n = self.n_nodes
        Y = mp.matrix(n, n)
        for e in self.edges:
            ri_Mohm_per_um = self._ri(e.diameter)
            z = self._q(s, e.diameter) * e.length
            y11 = self._q(s, e.diameter) * mp.coth(z) / ri_Mohm_per_um
            Y[e.a, e.a] += y11
            if e.b is not None:
                y12 = -self._q(s, e.diameter) / (ri_Mohm_per_um * mp.sinh(z))
                Y[e.b, e.b] += y11
                Y[e.a, e.b] += y12
                Y[e.b, e.a] += y12
        for node, sh in self.shunts.items():
            if sh[0] == "infinite":
                Y[node, node] += self._q(s, sh[1]) / self._ri(sh[1])
            else:
                Y[node, node] += sh[1] / 1000 + s * sh[2] / 1000
        if self.has_soma:
            Y[0, 0] += self.G_soma_uS + s * self.C_soma_nF
        return Y

    def voltages_s(self, s, inject):
        """Node voltages (mV) for 1 nA injected at node ``inject``, Laplace variable s."""
        key = (mp.mpc(s), inject, mp.prec)
        if key not in self._cache:
            rhs = mp.matrix(self.n_nodes, 1)
            rhs[inject] = 1
            self._cache[key] = mpmath.lu_solve(self.matrix(s), rhs)
        return self._cache[key]

    def voltages(self, freq_hz, inject):
        with mp.workdps(self.dps):
            return self.voltages_s(self.s_of(freq_hz), inject)

    def impedance(self, freq_hz, at, inject):
        """Z = V(at)/I(inject) in MOhm (complex); input impedance when at == inject."""
        with mp.workdps(self.dps):
            return self.voltages(freq_hz, self.node(inject))[self.node(at)]

    # ------------------------------------------------------------------ phase
    def _edge_phase(self, V, e, s, forward):
        """Unwrapped arg of V(end)/V(start) along edge e (forward: proximal -> distal).

        V(x) = (V_a sinh(q(l-x)) + V_b sinh(q x))/sinh(q l) is sampled every 0.25/|q| um, and an
        interval whose two samples differ by more than 1 rad in argument is bisected (near a
        large load admittance the argument can move by up to pi/2 over a short distance)."""
        va, vb = V[e.a], V[e.b]
        exact = mp.arg(vb / va) if forward else mp.arg(va / vb)
        if mp.im(s) == 0:
            return exact
        q = self._q(s, e.diameter)
        sh = mp.sinh(q * e.length)

        def v_at(x):
            return (va * mp.sinh(q * (e.length - x)) + vb * mp.sinh(q * x)) / sh

        m = max(4, int(mp.ceil(abs(q) * e.length / mp.mpf("0.25"))))
        xs = [e.length * k / m for k in range(m + 1)]
        if not forward:
            xs.reverse()
        stack = [(xs[k], xs[k + 1]) for k in range(m)][::-1]
        cache = {}

        def val(x):
            if x not in cache:
                cache[x] = va if x == 0 else (vb if x == e.length else v_at(x))
            return cache[x]

        rough = mp.mpf(0)
        while stack:
            x0, x1 = stack.pop()
            step = mp.arg(val(x1) / val(x0))
            if abs(step) > 1 and abs(x1 - x0) > mp.mpf("1e-12") * e.length:
                xm = (x0 + x1) / 2
                stack.extend([(xm, x1), (x0, xm)])
                continue
            rough += step
        turns = mp.nint((rough - exact) / (2 * mp.pi))
        return exact + 2 * mp.pi * turns

    def path_phase(self, freq_hz, site, inject_at_site):
        """Unwrapped phase (rad) of A: V_soma/V_site (inject at site) or V_site/V_soma."""
        with mp.workdps(self.dps):
            s = self.s_of(freq_hz)
            node = self.node(site)
            edges = self.path_edges(node)
            if inject_at_site:
                V = self.voltages_s(s, node)
                return mp.fsum(self._edge_phase(V, e, s, False) for e in reversed(edges))
            V = self.voltages_s(s, 0)
            return mp.fsum(self._edge_phase(V, e, s, True) for e in edges)

    # ------------------------------------------------------------------ quantities
    def dendritic_conductance_uS(self):
        """G_dendrites(0): DC input conductance of the tree at node 0 without the soma."""
        with mp.workdps(self.dps):
            Y = self.matrix(mp.mpf(0))
            if self.has_soma:
                Y[0, 0] -= self.G_soma_uS
            rhs = mp.matrix(self.n_nodes, 1)
            rhs[0] = 1
            return 1 / mpmath.lu_solve(Y, rhs)[0]

    def stem_g_inf_uS(self):
        """Sum over stems of 1/R_inf of the stem's proximal section (Rall 1959; rho_inf)."""
        with mp.workdps(self.dps):
            return mp.fsum(1 / self.r_inf_Mohm(_sections_of(self.branches[b])[0][1])
                           for b in self.stems)

    def centroid_delay_ms(self, site, inject_at_site):
        """-d/ds ln A(s) at s = 0 (Agmon-Snir & Segev 1993), A as in ``path_phase``."""
        with mp.workdps(self.dps):
            node = self.node(site)

            def log_a(s):
                if inject_at_site:
                    V = self.voltages_s(s, node)
                    return mp.log(V[0] / V[node])
                V = self.voltages_s(s, 0)
                return mp.log(V[node] / V[0])

            return -mp.diff(log_a, mp.mpf(0))

    def site_response(self, freq_hz, site):
        """Every frequency-domain quantity between ``site`` and the soma/root at one frequency.

        Returns mpf/mpc values: z_soma, z_site, z_transfer (V_soma for I at site),
        z_transfer_reverse (V_site for I at soma), a_site_to_soma, a_soma_to_site (complex),
        phase_site_to_soma, phase_soma_to_site, phase_transfer (rad, unwrapped).
        """
        with mp.workdps(self.dps):
            node = self.node(site)
            v_site = self.voltages(freq_hz, node)
            v_soma = self.voltages(freq_hz, 0)
            out = {
                "z_soma": v_soma[0],
                "z_site": v_site[node],
                "z_transfer": v_site[0],
                "z_transfer_reverse": v_soma[node],
                "a_site_to_soma": v_site[0] / v_site[node],
                "a_soma_to_site": v_soma[node] / v_soma[0],
            }
            out["phase_site_to_soma"] = self.path_phase(freq_hz, site, True)
            out["phase_soma_to_site"] = self.path_phase(freq_hz, site, False)
            out["phase_transfer"] = mp.arg(out["z_site"]) + out["phase_site_to_soma"]
            return out


def rel_close(value, ref, rel=1e-9, abs_tol=1e-12):
    """|value - ref| <= max(rel*|ref|, abs_tol): the S10 tolerance, evaluated in mpmath."""
    if value is None or (isinstance(value, float) and not math.isfinite(value)):
        return False
    with mp.workdps(DEFAULT_DPS):
        return abs(mp.mpf(value) - ref) <= max(rel * abs(ref), mp.mpf(abs_tol))
