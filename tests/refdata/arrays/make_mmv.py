"""Reference values for the joint (group atomic-norm) recovery of `tests/arrays_convex.rs`.

Invented scenes (seeded numpy draws): a uniform line array, sensor m = 0..M-1 (some missing),
snapshots x_t[m] = sum_j s_j(t) exp(+i 2 pi f_j m) + noise.

The primal group atomic-norm SDP (Li & Chi 2016, IEEE TSP 64(5), eq. (11); Yang & Xie 2016, IEEE TSP
64(4)) is written here independently of the Rust code: complex Hermitian PSD matrix of size M + L
(no dimension reduction, no compact real form), Toeplitz top-left block,

    ||X||_A = min (1/(2M)) tr T + 1/2 tr W   s.t.  [[T, X], [X^H, W]] >= 0,

with X_Omega = Y (exact) or ||X_Omega - Y||_F <= delta (constrained). cvxpy with the SCS and
CLARABEL solvers (the objective is cross-checked between the two). Positions and powers come from the
Vandermonde decomposition T = A diag(p) A^H (ESPRIT on the signal eigenvectors of T).

Run: python3 -m venv /tmp/v && /tmp/v/bin/pip install numpy cvxpy && /tmp/v/bin/python make_mmv.py
(written with numpy 2 and cvxpy 1.x). CI never runs this script.
"""
import json
import os

import cvxpy as cp
import numpy as np


def draw(m, l, positions, powers, missing, sigma, seed):
    rng = np.random.default_rng(seed)
    s = len(positions)
    amp = (rng.standard_normal((s, l)) + 1j * rng.standard_normal((s, l))) / np.sqrt(2)
    amp *= np.sqrt(np.asarray(powers))[:, None]
    sensors = [k for k in range(m) if k not in missing]
    a = np.exp(2j * np.pi * np.outer(np.arange(m), positions))
    x = a @ amp
    noise = (rng.standard_normal((m, l)) + 1j * rng.standard_normal((m, l))) / np.sqrt(2)
    x = x + sigma * noise
    return sensors, x[sensors, :]


def delta_for(sigma, count):
    # chi-square radius sigma * sqrt(n + 2 sqrt(n)), n = |K| * L complex noise entries
    return sigma * np.sqrt(count + 2 * np.sqrt(count))


def solve(m, sensors, y, delta, solver):
    l = y.shape[1]
    z = cp.Variable((m + l, m + l), hermitian=True)
    t = z[:m, :m]
    x = z[:m, m:]
    cons = [z >> 0]
    for i in range(m - 1):
        for j in range(m - 1):
            cons.append(t[i, j] == t[i + 1, j + 1])
    if delta is None:
        cons.append(x[sensors, :] == y)
    else:
        cons.append(cp.norm(x[sensors, :] - y, "fro") <= delta)
    obj = cp.Minimize(cp.real(cp.trace(t)) / (2 * m) + cp.real(cp.trace(z[m:, m:])) / 2)
    prob = cp.Problem(obj, cons)
    if solver == "SCS":
        prob.solve(solver=cp.SCS, eps=1e-10, max_iters=200000)
    else:
        prob.solve(solver=cp.CLARABEL)
    return prob.value, np.asarray(t.value)


def vandermonde(t, rel=1e-6):
    w, v = np.linalg.eigh((t + t.conj().T) / 2)
    order = np.argsort(w)[::-1]
    w, v = w[order], v[:, order]
    s = int(np.sum(w > rel * w[0]))
    u = v[:, :s]
    phi = np.linalg.lstsq(u[:-1], u[1:], rcond=None)[0]
    z = np.linalg.eigvals(phi)
    f = np.mod(np.angle(z) / (2 * np.pi), 1.0)
    m = t.shape[0]
    a = np.exp(2j * np.pi * np.outer(np.arange(m), f))
    # T = A diag(p) A^H: t[:, 0] = sum_j p_j a_j (a_j[0] = 1), least squares on the first column
    p = np.real(np.linalg.lstsq(a, t[:, 0], rcond=None)[0])
    order = np.argsort(f)
    return f[order].tolist(), p[order].tolist()


CASES = [
    dict(name="mmv_exact_full", m=8, l=3, positions=[0.1, 0.42], powers=[1.0, 2.0],
         missing=[], sigma=0.0, seed=11),
    dict(name="mmv_exact_missing", m=12, l=5, positions=[0.15, 0.4, 0.8], powers=[1.0, 1.0, 0.5],
         missing=[3, 7], sigma=0.0, seed=12),
    dict(name="mmv_constrained_full", m=10, l=20, positions=[0.2, 0.55], powers=[1.0, 1.0],
         missing=[], sigma=0.05, seed=13),
    dict(name="mmv_constrained_missing", m=10, l=8, positions=[0.3, 0.7], powers=[1.0, 0.7],
         missing=[4], sigma=0.05, seed=14),
]

if __name__ == "__main__":
    here = os.path.dirname(os.path.abspath(__file__))
    for c in CASES:
        sensors, y = draw(c["m"], c["l"], c["positions"], c["powers"], c["missing"], c["sigma"],
                          c["seed"])
        delta = None if c["sigma"] == 0 else delta_for(c["sigma"], len(sensors) * c["l"])
        obj, t = solve(c["m"], sensors, y, delta, "CLARABEL")
        obj_scs, _ = solve(c["m"], sensors, y, delta, "SCS")
        f, p = vandermonde(t)
        out = dict(
            description="Invented scene; primal group atomic-norm SDP solved by cvxpy "
                        f"{cp.__version__} (CLARABEL; SCS objective as a cross-check), "
                        "see make_mmv.py",
            sensors=sensors,
            snapshots=c["l"],
            re=np.real(y).tolist(),
            im=np.imag(y).tolist(),
            sigma=c["sigma"],
            delta=delta,
            objective=obj,
            objective_scs=obj_scs,
            positions=f,
            powers=p,
            true_positions=c["positions"],
        )
        with open(os.path.join(here, c["name"] + ".json"), "w") as fh:
            json.dump(out, fh, indent=1)
        print(c["name"], obj, obj_scs, f, p)
