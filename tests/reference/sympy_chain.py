#!/usr/bin/env python3
"""Reference equations of motion for a 3-D tree of rigid bodies, derived with sympy.physics.mechanics.

Builds a six-body tree (revolute and prismatic joints, skew axes, fixed joint rotations, full inertia
tensors), derives M(q) q'' + c(q, q') = Q with Kane's method (sympy.physics.mechanics.KanesMethod),
evaluates it at random states and writes a JSON fixture for the TypeScript engine tests.

Usage:  python3 tests/reference/sympy_chain.py --out tests/fixtures/dynamics/sympy-chain.json

Needs only sympy and numpy. Nothing is simplified; the model constants enter as symbols and the
equations are compiled to numpy code, so a run takes about 10-20 s. All random numbers come from
random.Random(20261202); the output is byte-for-byte reproducible.

Before writing, the script checks the equations against quantities computed independently from the
model definition (finite differences of the forward kinematics): the mass matrix, the kinetic energy,
dV/dq, the generalized forces of the external loads, and the velocity terms via Lagrange's equations.

Model conventions (the same as the engine's model format):
  * Revolute joint:  R_i = R_P . R0_i . Rot(a_i, q_i),   p_i = p_P + R_P . anchor_i
  * Prismatic joint: R_i = R_P . R0_i,                  p_i = p_P + R_P . anchor_i + R_i . a_i q_i
  * R0_i ("rotation") maps body-frame coordinates to parent-frame coordinates at q = 0; a_i is a unit
    vector in the body frame; anchor_i is in the parent frame; com_i and inertia_i (tensor about the
    centre of mass, h = I . w) are in the body frame.
  * Q_i is the torque (revolute) about a_i, or the force (prismatic) along a_i, applied by the parent
    on body i, with the equal and opposite reaction on the parent.
  * c(q, q') holds the velocity terms minus the generalized active forces of gravity and of the
    external loads, so that M q'' + c = Q.
"""

import argparse
import json
import math
import os
import random
import sys
import time

import numpy as np
import sympy as sm
import sympy.physics.mechanics as me
from sympy.printing.numpy import NumPyPrinter

T_START = time.perf_counter()
SEED = 20261202


# ----------------------------------------------------------------------------------------------
# Plain float helpers (the model is built with Python floats, then written with repr precision)
# ----------------------------------------------------------------------------------------------

def unit(v):
    n = math.sqrt(sum(x * x for x in v))
    return [x / n for x in v]


def rodrigues(axis, angle):
    """Right-handed rotation by `angle` about the unit vector `axis` (floats), as a nested list."""
    x, y, z = axis
    c, s = math.cos(angle), math.sin(angle)
    v = 1.0 - c
    return [
        [c + x * x * v, x * y * v - z * s, x * z * v + y * s],
        [y * x * v + z * s, c + y * y * v, y * z * v - x * s],
        [z * x * v - y * s, z * y * v + x * s, c + z * z * v],
    ]


def matmul(A, B):
    return [[sum(A[r][k] * B[k][c] for k in range(3)) for c in range(3)] for r in range(3)]


def transpose(A):
    return [[A[c][r] for c in range(3)] for r in range(3)]


def random_unit(rng, min_component=0.2):
    """Random unit vector with every component at least `min_component` in magnitude (non-axis-aligned)."""
    while True:
        v = unit([rng.gauss(0.0, 1.0) for _ in range(3)])
        if min(abs(x) for x in v) >= min_component:
            return v


def random_rotation(rng):
    return rodrigues(random_unit(rng), rng.uniform(0.4, 1.3))


def random_inertia(rng, mass):
    """Full symmetric positive-definite inertia tensor about the COM: Rr . diag(a, b, c) . Rr^T with
    principal moments that satisfy the triangle inequality with a margin."""
    while True:
        pm = sorted(mass * rng.uniform(0.002, 0.02) for _ in range(3))
        if pm[2] <= 0.9 * (pm[0] + pm[1]):
            break
    Rr = random_rotation(rng)
    D = [[pm[0], 0.0, 0.0], [0.0, pm[1], 0.0], [0.0, 0.0, pm[2]]]
    I = matmul(matmul(Rr, D), transpose(Rr))
    for r in range(3):  # make it exactly symmetric
        for c in range(r + 1, 3):
            I[c][r] = I[r][c]
    return I


def build_model(rng):
    # (name, parent, joint type, has a fixed rotation R0)
    layout = [
        ("root", -1, "revolute", False),
        ("upper", 0, "revolute", True),
        ("slider", 1, "prismatic", False),
        ("distal", 2, "revolute", True),
        ("side", 1, "revolute", True),
        ("sideTip", 4, "revolute", False),
    ]
    bodies = []
    for name, parent, jtype, has_r0 in layout:
        axis = random_unit(rng)
        length = rng.uniform(0.1, 0.5)
        anchor = [x * length for x in random_unit(rng, 0.1)]
        body = {"name": name, "parent": parent, "joint": {"type": jtype, "axis": axis}, "anchor": anchor}
        if has_r0:
            body["rotation"] = random_rotation(rng)
        mass = rng.uniform(0.5, 5.0)
        while True:  # COM well off the joint axis
            com = [x * rng.uniform(0.1, 0.3) for x in random_unit(rng, 0.1)]
            cr = [com[1] * axis[2] - com[2] * axis[1], com[2] * axis[0] - com[0] * axis[2],
                  com[0] * axis[1] - com[1] * axis[0]]
            if math.sqrt(sum(x * x for x in cr)) > 0.05:
                break
        body["mass"] = mass
        body["com"] = com
        body["inertia"] = random_inertia(rng, mass)
        bodies.append(body)
    return {"name": "sympy reference tree (6 bodies, one branch, revolute + prismatic)", "bodies": bodies}


# ----------------------------------------------------------------------------------------------
# Symbolic model and Kane's method (reference: sympy.physics.mechanics, KanesMethod)
# ----------------------------------------------------------------------------------------------

def axis_frame(a):
    """Constant rotation S (columns x', y', a) with S . e_z = a: the joint-aligned frame of a body."""
    a = np.array(a, dtype=float)
    h = np.array([1.0, 0.0, 0.0]) if abs(a[0]) < 0.9 else np.array([0.0, 1.0, 0.0])
    x = h - (h @ a) * a
    x /= np.linalg.norm(x)
    y = np.cross(a, x)
    return np.column_stack([x, y, a])


def derive(model, ext_force_body, ext_point, ext_torque_body):
    """Kane's method on the tree.

    To keep the expressions small, every body is represented in sympy by its joint-aligned frame C_i,
    whose z axis is the joint axis: R_Ci = R_i . S_i with S_i . e_z = a_i (S_i constant). Then
        R_Ci = R_Cp . K_i . Rz(q_i)   (revolute),   R_Ci = R_Cp . K_i   (prismatic),
        K_i = S_p^T . R0_i . S_i,
    because Rot(a, q) = S . Rz(q) . S^T. All body-frame constants (COM, inertia tensor, child anchors,
    load point) are rotated into C_i coordinates numerically; this is an exact change of basis.
    """
    bodies_in = model["bodies"]
    n = len(bodies_in)
    q = me.dynamicsymbols("q0:%d" % n)
    u = me.dynamicsymbols("u0:%d" % n)
    Qs = sm.symbols("Q0:%d" % n)
    g = sm.symbols("g0:3")      # gravity, world coordinates
    Fe = sm.symbols("F0:3")     # external force, world coordinates
    Te = sm.symbols("T0:3")     # external torque, world coordinates

    N = me.ReferenceFrame("N")
    O = me.Point("O")
    O.set_vel(N, 0)
    gvec = g[0] * N.x + g[1] * N.y + g[2] * N.z

    # Model constants enter as symbols, their values are passed to the lambdified functions: symbolic
    # products are much cheaper for sympy than Float arithmetic, and the values stay exact doubles.
    params = {}

    def const(name, value):
        sym = sm.Symbol(name)
        params[sym] = float(value)
        return sym

    def vec(frame, xyz, name):
        return sum((const("%s_%d" % (name, k), xyz[k]) * e for k, e in enumerate((frame.x, frame.y, frame.z))),
                   0 * frame.x)

    S = [axis_frame(b["joint"]["axis"]) for b in bodies_in]
    frames, origins, coms, rigid, loads = [], [], [], [], []
    for i, b in enumerate(bodies_in):
        par = b["parent"]
        P = N if par < 0 else frames[par]
        OP = O if par < 0 else origins[par]
        Sp = np.eye(3) if par < 0 else S[par]
        R0 = np.array(b.get("rotation", np.eye(3)), dtype=float)
        K = Sp.T @ R0 @ S[i]
        revolute = b["joint"]["type"] == "revolute"

        # sympy's C.orient(P, 'DCM', D) makes P.dcm(C) == D, i.e. D maps C-coordinates to
        # P-coordinates (checked numerically against the model definition in main()).
        Km = sm.Matrix(3, 3, [const("K%d_%d%d" % (i, r, cc), K[r, cc]) for r in range(3) for cc in range(3)])
        if revolute:
            c, s = sm.cos(q[i]), sm.sin(q[i])
            D = Km * sm.Matrix([[c, -s, 0], [s, c, 0], [0, 0, 1]])
        else:
            D = Km
        C = me.ReferenceFrame("C%d" % i)
        C.orient(P, "DCM", D)
        # Relative angular velocity given directly in terms of the generalized speed (u = q').
        C.set_ang_vel(P, u[i] * C.z if revolute else 0 * C.z)

        J = OP.locatenew("J%d" % i, vec(P, Sp.T @ np.array(b["anchor"]), "anchor%d" % i))  # joint point, fixed in parent
        J.v2pt_theory(OP, N, P)
        if revolute:
            Oi = J
        else:
            Oi = J.locatenew("S%d" % i, q[i] * C.z)  # body origin slides along the axis
            Oi.set_vel(C, 0 * C.z)
            Oi.set_vel(P, u[i] * C.z)
            Oi.v1pt_theory(J, N, P)
        G = Oi.locatenew("G%d" % i, vec(C, S[i].T @ np.array(b["com"]), "com%d" % i))
        G.v2pt_theory(Oi, N, C)

        # Inertia dyadic from the tensor components as given (h = I . w, no sign flip on the
        # off-diagonals), changed to C-axes: I_C = S^T . I . S, then sum_jk I_C[j][k] (c_j | c_k).
        Ic = S[i].T @ np.array(b["inertia"]) @ S[i]
        Ic = 0.5 * (Ic + Ic.T)
        e = [C.x, C.y, C.z]
        Isym = [[None] * 3 for _ in range(3)]
        for j in range(3):
            for kk in range(j, 3):
                Isym[j][kk] = Isym[kk][j] = const("I%d_%d%d" % (i, j, kk), Ic[j, kk])
        dyad = sum((Isym[j][kk] * (e[j] | e[kk]) for j in range(3) for kk in range(3)), me.Dyadic(0))
        mass = const("m%d" % i, b["mass"])
        rigid.append(me.RigidBody("body%d" % i, G, C, mass, (dyad, G)))

        loads.append((G, mass * gvec))
        # Joint actuation: parent on body (+), body on parent (-).
        if revolute:
            loads.append((C, Qs[i] * C.z))
            if par >= 0:
                loads.append((P, -Qs[i] * C.z))
        else:
            # The force pair acts along the axis line through J and the body origin, so it has no
            # net couple; its generalized force is Q_i (v_Oi - v_J) . a = Q_i u_i.
            loads.append((Oi, Qs[i] * C.z))
            if par >= 0:
                loads.append((J, -Qs[i] * C.z))

        frames.append(C)
        origins.append(Oi)
        coms.append(G)

    k = ext_force_body
    E = origins[k].locatenew("E", vec(frames[k], S[k].T @ np.array(ext_point), "xext"))
    E.v2pt_theory(origins[k], N, frames[k])
    loads.append((E, Fe[0] * N.x + Fe[1] * N.y + Fe[2] * N.z))
    loads.append((frames[ext_torque_body], Te[0] * N.x + Te[1] * N.y + Te[2] * N.z))

    kd = [q[i].diff(me.dynamicsymbols._t) - u[i] for i in range(n)]
    km = me.KanesMethod(N, q_ind=q, u_ind=u, kd_eqs=kd)
    km.kanes_equations(bodies=rigid, loads=loads)
    Mmat = km.mass_matrix
    forcing = km.forcing

    # Quantities for checks and the fixture.
    com_world = sm.Matrix([list(G.pos_from(O).to_matrix(N)) for G in coms])
    ke = sum(rb.kinetic_energy(N) for rb in rigid)
    dcms = [N.dcm(C) for C in frames]  # world orientation of C_i; R_i = R_Ci . S_i^T

    # Plain symbols for lambdify.
    qs = sm.symbols("qs0:%d" % n)
    us = sm.symbols("us0:%d" % n)
    rep = {q[i]: qs[i] for i in range(n)}
    rep.update({u[i]: us[i] for i in range(n)})
    qd_rep = {q[i].diff(me.dynamicsymbols._t): us[i] for i in range(n)}

    def plain(expr):
        return sm.Matrix(expr).xreplace(qd_rep).xreplace(rep)

    psyms = list(params)
    pvals = [params[x] for x in psyms]
    args = [qs, us, Qs, g, Fe, Te, psyms]
    Mp, Fp = plain(Mmat), plain(forcing)
    free = (Mp.free_symbols | Fp.free_symbols) - set(qs) - set(us) - set(Qs) - set(g) - set(Fe) - set(Te) \
        - set(psyms)

    def bound(expr):
        f = lam(args, expr)
        return lambda *a: f(*a, pvals)

    f_dcm = bound(plain(sm.Matrix.vstack(*dcms)))
    return {
        "n": n,
        "M": bound(Mp),
        "forcing": bound(Fp),
        "com": bound(plain(com_world)),
        "ke": bound(plain(sm.Matrix([ke]))),
        "R": lambda *a: np.vstack([blk @ S[i].T for i, blk in enumerate(np.split(f_dcm(*a), n))]),
        "free": free,
    }


class _FullFloatPrinter(NumPyPrinter):
    """Prints sympy Floats with repr(float) so numeric constants keep full double precision."""

    def _print_Float(self, expr):
        return repr(float(expr))


def lam(args, expr):
    """Compile a sympy Matrix into a numpy function of the symbol lists `args`.

    Does the common-subexpression elimination and code printing directly (what lambdify does), without
    term re-ordering and without lambdify's docstring, which prints the whole expression and is slow on
    older sympy versions."""
    expr = sm.Matrix(expr)
    replacements, reduced = sm.cse(list(expr), symbols=sm.numbered_symbols("cse_"), order="none")
    printer = _FullFloatPrinter({"order": "none"})
    names = ["arg%d" % k for k in range(len(args))]
    lines = ["def _f(%s):" % ", ".join(names)]
    for name, group in zip(names, args):
        lines.append("    [%s] = %s" % (", ".join(str(x) for x in group) + ",", name))
    for sym, sub in replacements:
        lines.append("    %s = %s" % (sym, printer.doprint(sub)))
    lines.append("    return numpy.array([%s], dtype=float).reshape(%d, %d)"
                 % (", ".join(printer.doprint(x) for x in reduced), expr.shape[0], expr.shape[1]))
    namespace = {"numpy": np}
    exec("\n".join(lines), namespace)
    return namespace["_f"]


# ----------------------------------------------------------------------------------------------
# Independent numeric kinematics straight from the model definition (no sympy), for the checks
# ----------------------------------------------------------------------------------------------

def fk(model, qv):
    Rs, ps = [], []
    for i, b in enumerate(model["bodies"]):
        par = b["parent"]
        RP = np.eye(3) if par < 0 else Rs[par]
        pP = np.zeros(3) if par < 0 else ps[par]
        R0 = np.array(b.get("rotation", np.eye(3)), dtype=float)
        a = np.array(b["joint"]["axis"])
        if b["joint"]["type"] == "revolute":
            R = RP @ R0 @ np.array(rodrigues(list(a), qv[i]))
            p = pP + RP @ np.array(b["anchor"])
        else:
            R = RP @ R0
            p = pP + RP @ np.array(b["anchor"]) + R @ a * qv[i]
        Rs.append(R)
        ps.append(p)
    return Rs, ps


def fk_coms(model, qv):
    Rs, ps = fk(model, qv)
    return [ps[i] + Rs[i] @ np.array(b["com"]) for i, b in enumerate(model["bodies"])]


def potential(model, gravity, qv):
    cs = fk_coms(model, qv)
    return -sum(b["mass"] * float(np.dot(gravity, cs[i])) for i, b in enumerate(model["bodies"]))


def vee(W):
    return np.array([W[2, 1] - W[1, 2], W[0, 2] - W[2, 0], W[1, 0] - W[0, 1]]) / 2.0


def fk_kinetic(model, qv, qdv, h=1e-5):
    """Kinetic energy from finite-difference velocities along q(t) = q + qd t."""
    qv, qdv = np.array(qv), np.array(qdv)
    Rp, pp = fk(model, qv + h * qdv)
    Rm, pm = fk(model, qv - h * qdv)
    R, _ = fk(model, qv)
    T = 0.0
    for i, b in enumerate(model["bodies"]):
        com = np.array(b["com"])
        v = ((pp[i] + Rp[i] @ com) - (pm[i] + Rm[i] @ com)) / (2 * h)
        w = vee((Rp[i] - Rm[i]) / (2 * h) @ R[i].T)  # world angular velocity
        wb = R[i].T @ w
        T += 0.5 * b["mass"] * float(v @ v) + 0.5 * float(wb @ np.array(b["inertia"]) @ wb)
    return T


def fk_mass_matrix(model, qv, h=1e-6):
    """M = sum_i m_i Jv_i^T Jv_i + Jw_i^T (R_i I_i R_i^T) Jw_i, Jacobians by central differences."""
    n = len(model["bodies"])
    R, _ = fk(model, qv)
    Jv = np.zeros((n, 3, n))
    Jw = np.zeros((n, 3, n))
    for m in range(n):
        dq = np.zeros(n)
        dq[m] = h
        cp, cm = fk_coms(model, np.array(qv) + dq), fk_coms(model, np.array(qv) - dq)
        Rp, _ = fk(model, np.array(qv) + dq)
        Rm, _ = fk(model, np.array(qv) - dq)
        for i in range(n):
            Jv[i, :, m] = (cp[i] - cm[i]) / (2 * h)
            Jw[i, :, m] = vee((Rp[i] - Rm[i]) / (2 * h) @ R[i].T)
    M = np.zeros((n, n))
    for i, b in enumerate(model["bodies"]):
        Iw = R[i] @ np.array(b["inertia"]) @ R[i].T
        M += b["mass"] * Jv[i].T @ Jv[i] + Jw[i].T @ Iw @ Jw[i]
    return M


def fk_external_genforce(model, qv, k, point, force, j, torque, h=1e-6):
    """Generalized active force of the external loads, from finite differences of the kinematics."""
    n = len(model["bodies"])
    out = np.zeros(n)
    R, _ = fk(model, qv)
    for m in range(n):
        dq = np.zeros(n)
        dq[m] = h
        Rp, pp = fk(model, np.array(qv) + dq)
        Rm, pm = fk(model, np.array(qv) - dq)
        dx = ((pp[k] + Rp[k] @ point) - (pm[k] + Rm[k] @ point)) / (2 * h)
        dw = vee((Rp[j] - Rm[j]) / (2 * h) @ R[j].T)
        out[m] = float(force @ dx) + float(torque @ dw)
    return out


# ----------------------------------------------------------------------------------------------

def main():
    ap = argparse.ArgumentParser(description=__doc__.split("\n\n")[0])
    ap.add_argument("--out", required=True, help="path of the JSON fixture to write")
    ap.add_argument("--states", type=int, default=6)
    opts = ap.parse_args()

    rng = random.Random(SEED)
    model = build_model(rng)
    n = len(model["bodies"])
    gravity = [0.4, -9.7, 1.3]
    ext_force_body, ext_torque_body = 3, 5
    ext_point = [x * 0.25 for x in random_unit(rng, 0.1)]
    ext_force = [rng.uniform(-20.0, 20.0) for _ in range(3)]
    ext_torque = [rng.uniform(-3.0, 3.0) for _ in range(3)]
    prismatic = [b["joint"]["type"] == "prismatic" for b in model["bodies"]]
    states_in = []
    for _ in range(opts.states):
        qv = [rng.uniform(-0.1, 0.1) if p else rng.uniform(-1.2, 1.2) for p in prismatic]
        qdv = [rng.uniform(-2.0, 2.0) for _ in range(n)]
        qddv = [rng.uniform(-3.0, 3.0) for _ in range(n)]
        states_in.append((qv, qdv, qddv))

    t0 = time.perf_counter()
    eom = derive(model, ext_force_body, ext_point, ext_torque_body)
    t_derive = time.perf_counter() - t0
    print("derivation + lambdify: %.2f s" % t_derive)
    assert not eom["free"], "unexpected free symbols: %s" % eom["free"]

    zeros = [0.0] * n
    z3 = [0.0, 0.0, 0.0]
    gz = np.array(gravity)
    Fz, Tz = np.array(ext_force), np.array(ext_torque)

    def M_at(qv):
        return eom["M"](qv, zeros, zeros, z3, z3, z3)

    def c_at(qv, qdv, g=gravity, F=ext_force, T=ext_torque):
        return -eom["forcing"](qv, qdv, zeros, g, F, T).reshape(n)

    worst = {k: 0.0 for k in ("sym", "M_fk", "add", "com", "ke_body", "ke_fk", "grav", "ext", "vel", "Q", "dcm")}

    def rel(a, b):
        a, b = np.asarray(a, float), np.asarray(b, float)
        return float(np.max(np.abs(a - b)) / max(1.0, float(np.max(np.abs(b)))))

    states = []
    for qv, qdv, qddv in states_in:
        M = M_at(qv)
        c = c_at(qv, qdv)
        Q = M @ np.array(qddv) + c

        # 1. M symmetric and positive definite.
        worst["sym"] = max(worst["sym"], float(np.max(np.abs(M - M.T)) / np.max(np.abs(M))))
        lam_min = float(np.min(np.linalg.eigvalsh(0.5 * (M + M.T))))
        assert lam_min > 0, "mass matrix not positive definite (min eigenvalue %g)" % lam_min
        np.linalg.cholesky(0.5 * (M + M.T))

        # 2. Kinematics: sympy's body orientations and COM positions against the model definition.
        Rs, _ = fk(model, qv)
        worst["dcm"] = max(worst["dcm"], rel(eom["R"](qv, zeros, zeros, z3, z3, z3), np.vstack(Rs)))
        com_sym = eom["com"](qv, zeros, zeros, z3, z3, z3)
        worst["com"] = max(worst["com"], rel(com_sym, np.array(fk_coms(model, qv))))

        worst["M_fk"] = max(worst["M_fk"], rel(M, fk_mass_matrix(model, qv)))

        # 3. Kinetic energy: 1/2 qd.M.qd against sympy's rigid-body energy and finite-difference kinematics.
        T = 0.5 * float(np.array(qdv) @ M @ np.array(qdv))
        T_body = float(eom["ke"](qv, qdv, zeros, z3, z3, z3).reshape(-1)[0])
        worst["ke_body"] = max(worst["ke_body"], abs(T - T_body) / max(1.0, abs(T)))
        worst["ke_fk"] = max(worst["ke_fk"], abs(T - fk_kinetic(model, qv, qdv)) / max(1.0, abs(T)))

        # 4. Gravity: c(q, 0) without external loads equals dV/dq (central differences of V).
        h = 1e-6
        gradV = np.array([(potential(model, gz, np.array(qv) + h * e) - potential(model, gz, np.array(qv) - h * e))
                          / (2 * h) for e in np.eye(n)])
        worst["grav"] = max(worst["grav"], rel(c_at(qv, zeros, gravity, z3, z3), gradV))

        # 5. External loads: their contribution to c is minus their generalized active force.
        c_ext = c_at(qv, zeros, z3, ext_force, ext_torque)
        gf = fk_external_genforce(model, qv, ext_force_body, np.array(ext_point), Fz, ext_torque_body, Tz)
        worst["ext"] = max(worst["ext"], rel(c_ext, -gf))

        # 6. Velocity terms against Lagrange's equations with dM/dq by central differences:
        #    c_vel_i = sum_jk (dM_ij/dq_k - 1/2 dM_jk/dq_i) qd_j qd_k.
        dM = []
        for e in np.eye(n):
            dM.append((M_at(np.array(qv) + h * e) - M_at(np.array(qv) - h * e)) / (2 * h))
        qd = np.array(qdv)
        c_vel_lag = np.array([sum(dM[k][i, :] @ qd * qd[k] for k in range(n)) - 0.5 * qd @ dM[i] @ qd
                              for i in range(n)])
        worst["vel"] = max(worst["vel"], rel(c_at(qv, qdv, z3, z3, z3), c_vel_lag))

        # The full c is the sum of its velocity, gravity and external-load parts (no cross terms).
        c_parts = c_at(qv, qdv, z3, z3, z3) + c_at(qv, zeros, gravity, z3, z3) + c_ext
        worst["add"] = max(worst["add"], rel(c, c_parts))

        # 7. Joint actuation enters as +Q (both joint types): d(forcing)/dQ is the identity.
        base = eom["forcing"](qv, qdv, zeros, gravity, ext_force, ext_torque).reshape(n)
        for m in range(n):
            Qm = [0.0] * n
            Qm[m] = 1.0
            dF = eom["forcing"](qv, qdv, Qm, gravity, ext_force, ext_torque).reshape(n) - base
            worst["Q"] = max(worst["Q"], rel(dF, np.eye(n)[m]))

        V = potential(model, gz, qv)
        states.append({
            "q": [float(x) for x in qv],
            "qd": [float(x) for x in qdv],
            "qdd": [float(x) for x in qddv],
            "M": [[float(x) for x in row] for row in M],
            "c": [float(x) for x in c],
            "Q": [float(x) for x in Q],
            "comWorld": [[float(x) for x in row] for row in com_sym],
            "kineticEnergy": T,
            "potentialEnergy": V,
        })

    tol = {"sym": 1e-12, "M_fk": 1e-8, "add": 1e-12, "dcm": 1e-12, "com": 1e-12, "ke_body": 1e-12, "ke_fk": 1e-8, "grav": 1e-6,
           "ext": 1e-6, "vel": 1e-6, "Q": 1e-12}
    labels = {
        "sym": "M symmetric (max |M-M^T| / max|M|)",
        "M_fk": "M vs Jacobian-based mass matrix (finite differences of kinematics)",
        "add": "c = velocity part + gravity part + external-load part",
        "dcm": "body orientations vs model definition",
        "com": "COM positions vs model definition",
        "ke_body": "1/2 qd.M.qd vs sympy rigid-body kinetic energy",
        "ke_fk": "1/2 qd.M.qd vs finite-difference kinetic energy",
        "grav": "c(q, 0), gravity only, vs dV/dq (finite differences)",
        "ext": "external-load part of c vs -(generalized force by finite differences)",
        "vel": "velocity part of c vs Lagrange terms from dM/dq (finite differences)",
        "Q": "joint actuation enters forcing as +Q (revolute and prismatic)",
    }
    ok = True
    for k in tol:
        good = worst[k] <= tol[k]
        ok &= good
        print("check %-72s %.2e  (tol %.0e)  %s" % (labels[k], worst[k], tol[k], "ok" if good else "FAIL"))
    print("check M positive definite at all %d states: ok" % len(states))
    if not ok:
        print("self-check FAILED; fixture not written", file=sys.stderr)
        sys.exit(1)

    fixture = {
        "source": "sympy.physics.mechanics %s (KanesMethod), generated by tests/reference/sympy_chain.py"
                  % sm.__version__,
        "model": model,
        "gravity": gravity,
        "externalLoads": [
            {"body": ext_force_body, "point": ext_point, "force": ext_force, "torque": [0.0, 0.0, 0.0]},
            {"body": ext_torque_body, "point": [0.0, 0.0, 0.0], "force": [0.0, 0.0, 0.0], "torque": ext_torque},
        ],
        "states": states,
    }
    out_dir = os.path.dirname(opts.out)
    if out_dir:
        os.makedirs(out_dir, exist_ok=True)
    with open(opts.out, "w") as fh:
        # json writes floats with repr(), i.e. the shortest string that round-trips the double.
        json.dump(fixture, fh, indent=2)
        fh.write("\n")
    print("wrote %s (%d states)" % (opts.out, len(states)))
    print("total runtime: %.2f s" % (time.perf_counter() - T_START))


if __name__ == "__main__":
    main()
