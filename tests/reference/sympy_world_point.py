#!/usr/bin/env python3
"""Reference joint torques of a two-body 3-D chain loaded by a force through a point given in lab coordinates,
derived with sympy.physics.mechanics (Kane's method, KanesMethod).

Body 0 turns about a skew axis at a lab anchor; body 1 hangs from it at an offset anchor, with a fixed rotation
R0 and its own skew axis. A force (lab axes) acts on body 1 at a point P fixed in the LAB (as a centre of
pressure is), i.e. on the particle of body 1 that is at P at this instant: its partial velocities are those of
that body point (v2pt_theory from body 1's origin), not of the lab point. A free torque (lab axes) acts on body 1.
Gravity is off-axis. At random states the script solves Kane's equations Fr + Fr* = 0 for the two joint torques.

Usage:  python3 tests/reference/sympy_world_point.py --out tests/fixtures/dynamics/sympy-world-point.json
Model conventions: those of the engine (docs/dynamics.md); R_i = R_parent . R0_i . Rot(a_i, q_i).
"""
import math
import random

import numpy as np
import sympy as sm
import sympy.physics.mechanics as me

from reference_io import out_path, write_fixture

SEED = 20261215


def unit(v):
    n = math.sqrt(sum(x * x for x in v))
    return [x / n for x in v]


def rodrigues(a, t):
    x, y, z = a
    c, s, C = math.cos(t), math.sin(t), 1 - math.cos(t)
    return [
        [c + x * x * C, x * y * C - z * s, x * z * C + y * s],
        [y * x * C + z * s, c + y * y * C, y * z * C - x * s],
        [z * x * C - y * s, z * y * C + x * s, c + z * z * C],
    ]


def main():
    out = out_path(__doc__)
    rng = random.Random(SEED)
    r = lambda lo, hi: float(f"{rng.uniform(lo, hi):.12g}")
    a0 = unit([0.3, 0.2, 1.0])
    a1 = unit([0.1, -0.25, 1.0])
    u0 = unit([1.0, 0.4, -0.3])
    R0 = rodrigues(u0, 0.35)
    anchor0 = [0.1, 0.9, 0.05]
    anchor1 = [0.02, -0.42, 0.01]
    m0, m1 = 7.2, 3.1
    c0, c1 = [0.01, -0.18, 0.005], [0.02, -0.2, -0.01]
    I0 = [[0.11, 0.004, -0.002], [0.004, 0.02, 0.003], [-0.002, 0.003, 0.1]]
    I1 = [[0.04, -0.002, 0.001], [-0.002, 0.006, 0.0015], [0.001, 0.0015, 0.038]]
    gravity = [0.3, -9.8, 0.2]

    N = me.ReferenceFrame("N")
    O = me.Point("O")
    O.set_vel(N, 0)
    q = me.dynamicsymbols("q0 q1")
    u = me.dynamicsymbols("u0 u1")
    T = sm.symbols("T0 T1")
    Px, Py, Pz, Fx, Fy, Fz, Mx, My, Mz = sm.symbols("Px Py Pz Fx Fy Fz Mx My Mz")

    B0 = me.ReferenceFrame("B0")
    B0.orient_axis(N, a0[0] * N.x + a0[1] * N.y + a0[2] * N.z, q[0])
    B0.set_ang_vel(N, u[0] * (a0[0] * B0.x + a0[1] * B0.y + a0[2] * B0.z))
    A1 = me.ReferenceFrame("A1")  # body 0 turned by the fixed rotation R0
    A1.orient(B0, "DCM", sm.Matrix(R0))  # makes B0.dcm(A1) == R0: A1-coordinates to B0-coordinates
    B1 = me.ReferenceFrame("B1")
    B1.orient_axis(A1, a1[0] * A1.x + a1[1] * A1.y + a1[2] * A1.z, q[1])
    B1.set_ang_vel(N, B0.ang_vel_in(N) + u[1] * (a1[0] * B1.x + a1[1] * B1.y + a1[2] * B1.z))

    O0 = O.locatenew("O0", anchor0[0] * N.x + anchor0[1] * N.y + anchor0[2] * N.z)
    O0.set_vel(N, 0)
    O1 = O0.locatenew("O1", anchor1[0] * B0.x + anchor1[1] * B0.y + anchor1[2] * B0.z)
    O1.v2pt_theory(O0, N, B0)
    G0 = O0.locatenew("G0", c0[0] * B0.x + c0[1] * B0.y + c0[2] * B0.z)
    G0.v2pt_theory(O0, N, B0)
    G1 = O1.locatenew("G1", c1[0] * B1.x + c1[1] * B1.y + c1[2] * B1.z)
    G1.v2pt_theory(O1, N, B1)
    # the particle of body 1 at the lab point P
    Pv = Px * N.x + Py * N.y + Pz * N.z
    E = O1.locatenew("E", Pv - O1.pos_from(O))
    E.v2pt_theory(O1, N, B1)

    def dyad(I, F):
        return sum((I[i][j] * me.outer([F.x, F.y, F.z][i], [F.x, F.y, F.z][j]) for i in range(3) for j in range(3)), me.Dyadic(0))

    b0 = me.RigidBody("b0", G0, B0, m0, (dyad(I0, B0), G0))
    b1 = me.RigidBody("b1", G1, B1, m1, (dyad(I1, B1), G1))
    g = gravity[0] * N.x + gravity[1] * N.y + gravity[2] * N.z
    e0 = a0[0] * B0.x + a0[1] * B0.y + a0[2] * B0.z
    e1 = a1[0] * B1.x + a1[1] * B1.y + a1[2] * B1.z
    loads = [
        (G0, m0 * g),
        (G1, m1 * g),
        (B0, T[0] * e0),
        (B1, T[1] * e1),
        (B0, -T[1] * e1),
        (E, Fx * N.x + Fy * N.y + Fz * N.z),
        (B1, Mx * N.x + My * N.y + Mz * N.z),
    ]
    km = me.KanesMethod(N, q_ind=q, u_ind=u, kd_eqs=[q[i].diff() - u[i] for i in range(2)])
    fr, frstar = km.kanes_equations([b0, b1], loads)
    qdd = sm.symbols("qdd0 qdd1")
    eqs = (fr + frstar).subs({u[i].diff(): qdd[i] for i in range(2)})
    sol = sm.solve(list(eqs), T, dict=True)[0]
    qs, us = sm.symbols("qs0 qs1"), sm.symbols("us0 us1")
    rep = {**{u[i]: us[i] for i in range(2)}, **{q[i]: qs[i] for i in range(2)}}
    args = [*qs, *us, *qdd, Px, Py, Pz, Fx, Fy, Fz, Mx, My, Mz]
    f = [sm.lambdify(args, sol[T[i]].subs(rep), "math") for i in range(2)]

    states = []
    for _ in range(6):
        qv = [r(-1.2, 1.2), r(-1.2, 1.2)]
        qdv = [r(-3, 3), r(-3, 3)]
        qddv = [r(-10, 10), r(-10, 10)]
        P = [r(-0.3, 0.5), r(-0.1, 0.1), r(-0.3, 0.3)]
        F = [r(-150, 150), r(200, 900), r(-100, 100)]
        M = [r(-5, 5), r(-5, 5), r(-5, 5)]
        vals = [*qv, *qdv, *qddv, *P, *F, *M]
        states.append({"q": qv, "qd": qdv, "qdd": qddv, "point": P, "force": F, "torque": M, "Q": [float(fi(*vals)) for fi in f]})

    def body(name, parent, axis, anchor, mass, com, inertia, rotation=None):
        b = {"name": name, "parent": parent, "joint": {"type": "revolute", "axis": axis}, "anchor": anchor, "mass": mass, "com": com, "inertia": inertia}
        if rotation is not None:
            b["rotation"] = rotation
        return b

    fixture = {
        "source": "sympy.physics.mechanics %s (KanesMethod), generated by tests/reference/sympy_world_point.py" % sm.__version__,
        "model": {"name": "two bodies, world-point load", "bodies": [body("b0", -1, a0, anchor0, m0, c0, I0), body("b1", 0, a1, anchor1, m1, c1, I1, R0)]},
        "gravity": gravity,
        "loadBody": 1,
        "states": states,
    }
    write_fixture(out, fixture, indent=1)


if __name__ == "__main__":
    main()
