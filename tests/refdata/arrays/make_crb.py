"""Reference Cramér–Rao bounds for multi-snapshot array records (tests/array_bounds.rs).

Every scene here is invented. The bounds are computed from the FULL Fisher information of each model
(Slepian–Bangs), not from the concentrated matrix formulas the crate implements, so the test compares
two independent routes:

- deterministic (conditional) model, X = A(f) S + W: unknowns f (s reals), Re S and Im S (2sL reals);
  F = (2/σ²) Re(Jᴴ J) with J the Jacobian of vec(A S) (Slepian–Bangs for a deterministic mean,
  Stoica & Nehorai 1989, IEEE TASSP 37(5)); the position block of F⁻¹. The sources' amplitudes are
  S = C Q with C Cᴴ = P (Cholesky) and Q_jt = exp(i2πjt/L), so that S Sᴴ / L = P exactly.
- stochastic (unconditional) model, x_t ~ CN(0, R), R = A P Aᴴ + σ² I: unknowns f, the s² real
  parameters of the Hermitian P (p_jj, Re p_ij, Im p_ij for i < j) and σ²;
  F_ab = L Re tr(R⁻¹ ∂_a R R⁻¹ ∂_b R) (Slepian–Bangs for a Gaussian covariance; Stoica & Nehorai 1990,
  IEEE TASSP 38(10)); the position block of F⁻¹.

Steering vector a(f)_m = exp(i2πfm) at the sensors present (m = sensor number). Positions f are
spatial frequencies (cycles per sensor); with half-wavelength spacing f = sin(θ)/2.

Run: python3 -m venv /tmp/v && /tmp/v/bin/pip install numpy && /tmp/v/bin/python make_crb.py
(numpy 2.4.6 wrote crb.json). As a check the script also evaluates the concentrated formulas
CRB_det = σ²/(2L) {Re[(DᴴΠ⊥D) ⊙ Pᵀ]}⁻¹ and CRB_sto = σ²/(2L) {Re[(DᴴΠ⊥D) ⊙ (PAᴴR⁻¹AP)ᵀ]}⁻¹ and
asserts that they agree with the full Fisher information to 1e-8 (relative), and prints the check
values of the research notes (shared/notes/snapshots-and-real-signals.md §A(3)).
"""

import json
import os

import numpy as np


def steering(sensors, f):
    m = np.asarray(sensors, dtype=float)[:, None]
    return np.exp(2j * np.pi * m * np.asarray(f, dtype=float)[None, :])


def derivative(sensors, f):
    m = np.asarray(sensors, dtype=float)[:, None]
    return 2j * np.pi * m * steering(sensors, f)


def det_full_fim(sensors, f, P, L, sigma):
    s = len(f)
    A = steering(sensors, f)
    D = derivative(sensors, f)
    C = np.linalg.cholesky(P)
    t = np.arange(L)
    Q = np.exp(2j * np.pi * np.outer(np.arange(s), t) / L)
    S = C @ Q
    n = len(sensors)
    # Jacobian of vec(A S) (column-major: snapshot by snapshot) against (f, Re S, Im S).
    cols = []
    for j in range(s):
        cols.append((D[:, [j]] * S[[j], :]).reshape(-1, order="F"))
    for part in (1.0, 1j):
        for t_ in range(L):
            for j in range(s):
                col = np.zeros((n, L), dtype=complex)
                col[:, t_] = part * A[:, j]
                cols.append(col.reshape(-1, order="F"))
    J = np.stack(cols, axis=1)
    F = 2.0 / sigma**2 * np.real(J.conj().T @ J)
    return np.diag(np.linalg.inv(F))[:s]


def sto_full_fim(sensors, f, P, L, sigma):
    s = len(f)
    A = steering(sensors, f)
    D = derivative(sensors, f)
    n = len(sensors)
    R = A @ P @ A.conj().T + sigma**2 * np.eye(n)
    Ri = np.linalg.inv(R)
    dR = []
    for k in range(s):
        Dk = np.zeros_like(A)
        Dk[:, k] = D[:, k]
        dR.append(Dk @ P @ A.conj().T + A @ P @ Dk.conj().T)
    for i in range(s):
        dR.append(np.outer(A[:, i], A[:, i].conj()))
    for i in range(s):
        for j in range(i + 1, s):
            ai, aj = A[:, i], A[:, j]
            dR.append(np.outer(ai, aj.conj()) + np.outer(aj, ai.conj()))
            dR.append(1j * np.outer(ai, aj.conj()) - 1j * np.outer(aj, ai.conj()))
    dR.append(np.eye(n))
    p = len(dR)
    F = np.zeros((p, p))
    W = [Ri @ d for d in dR]
    for a in range(p):
        for b in range(a, p):
            F[a, b] = F[b, a] = L * np.real(np.trace(W[a] @ W[b]))
    return np.diag(np.linalg.inv(F))[:s]


def formulas(sensors, f, P, L, sigma):
    A = steering(sensors, f)
    D = derivative(sensors, f)
    n = len(sensors)
    proj = np.eye(n) - A @ np.linalg.solve(A.conj().T @ A, A.conj().T)
    H = D.conj().T @ proj @ D
    R = A @ P @ A.conj().T + sigma**2 * np.eye(n)
    B = P @ A.conj().T @ np.linalg.solve(R, A) @ P
    det = sigma**2 / (2 * L) * np.linalg.inv(np.real(H * P.T))
    sto = sigma**2 / (2 * L) * np.linalg.inv(np.real(H * B.T))
    return np.diag(det), np.diag(sto)


def half_wave(theta_deg):
    return [0.5 * np.sin(np.radians(t)) for t in theta_deg]


def corr(powers, rho):
    """Source covariance with powers on the diagonal and correlation coefficients rho[i][j] (i < j)."""
    s = len(powers)
    P = np.diag(np.asarray(powers, dtype=complex))
    for (i, j), r in rho.items():
        P[i, j] = r * np.sqrt(powers[i] * powers[j])
        P[j, i] = np.conj(P[i, j])
    return P


CASES = [
    # The research notes' §A(3) scenes (0 dB means P = 1 against σ = 1).
    dict(name="notes_one_source", sensors=list(range(8)), snapshots=100,
         positions=half_wave([20.0]), P=corr([1.0], {}), sigma=1.0),
    dict(name="notes_pair_uncorrelated", sensors=list(range(8)), snapshots=100,
         positions=half_wave([0.0, 8.0]), P=corr([1.0, 1.0], {}), sigma=1.0),
    dict(name="notes_pair_rho09", sensors=list(range(8)), snapshots=100,
         positions=half_wave([0.0, 8.0]), P=corr([1.0, 1.0], {(0, 1): 0.9}), sigma=1.0),
    dict(name="notes_pm10_uncorrelated", sensors=list(range(16)), snapshots=50,
         positions=half_wave([-10.0, 10.0]), P=corr([1.0, 1.0], {}), sigma=1.0),
    dict(name="notes_pm10_rho099", sensors=list(range(16)), snapshots=50,
         positions=half_wave([-10.0, 10.0]), P=corr([1.0, 1.0], {(0, 1): 0.99}), sigma=1.0),
    # Further invented scenes: three sources with complex correlations and unequal powers.
    dict(name="three_complex_correlated", sensors=list(range(12)), snapshots=30,
         positions=[0.05, 0.17, -0.31],
         P=corr([10.0, 3.0, 1.0], {(0, 1): 0.5 * np.exp(0.3j), (0, 2): 0.2 * np.exp(-1.1j),
                                   (1, 2): -0.4}),
         sigma=0.8),
    # A nearly coherent pair (|ρ| = 0.999) 1.5/M apart at 20 dB.
    dict(name="coherent_ish_pair", sensors=list(range(10)), snapshots=60,
         positions=[0.1, 0.1 + 1.5 / 10], P=corr([100.0, 100.0], {(0, 1): 0.999 * np.exp(0.7j)}),
         sigma=1.0),
    # Missing sensors (a thinned array of span 14 with 10 sensors), three sources.
    dict(name="missing_sensors_three", sensors=[0, 1, 2, 4, 5, 7, 8, 10, 12, 13], snapshots=40,
         positions=[-0.2, 0.02, 0.12], P=corr([4.0, 1.0, 2.0], {(1, 2): 0.6j}), sigma=1.0),
    # One source on a thinned array.
    dict(name="missing_sensors_one", sensors=[0, 3, 4, 9, 11], snapshots=20,
         positions=[0.33], P=corr([0.5], {}), sigma=1.0),
]


def main():
    out = []
    for c in CASES:
        P = np.asarray(c["P"], dtype=complex)
        args = (c["sensors"], c["positions"], P, c["snapshots"], c["sigma"])
        det = det_full_fim(*args)
        sto = sto_full_fim(*args)
        fdet, fsto = formulas(*args)
        assert np.allclose(det, fdet, rtol=1e-8, atol=0), (c["name"], det, fdet)
        assert np.allclose(sto, fsto, rtol=1e-8, atol=0), (c["name"], sto, fsto)
        print(c["name"], "var_det", det, "var_sto", sto)
        out.append(dict(
            name=c["name"],
            sensors=c["sensors"],
            snapshots=c["snapshots"],
            positions=[float(x) for x in c["positions"]],
            source_covariance=[[[float(v.real), float(v.imag)] for v in row] for row in P],
            sigma=c["sigma"],
            var_det=[float(x) for x in det],
            var_sto=[float(x) for x in sto],
        ))
    # The notes' angle figures: std θ = std f / (0.5 cos θ), in degrees.
    for name, theta in (("notes_pm10_uncorrelated", 10.0), ("notes_pm10_rho099", 10.0)):
        c = next(o for o in out if o["name"] == name)
        to_deg = lambda v: np.degrees(np.sqrt(v) / (0.5 * np.cos(np.radians(theta))))
        print(name, "std θ det", [to_deg(v) for v in c["var_det"]],
              "sto", [to_deg(v) for v in c["var_sto"]])
    doc = dict(
        source="tests/refdata/arrays/make_crb.py with numpy " + np.__version__
        + ": position variances (cycles per sensor, squared) from the full Fisher information "
        "of the deterministic and stochastic models (Slepian–Bangs); invented scenes",
        steering="a(f)_m = exp(i2πfm), m = sensor number",
        cases=out,
    )
    path = os.path.join(os.path.dirname(os.path.abspath(__file__)), "crb.json")
    with open(path, "w") as fh:
        json.dump(doc, fh, indent=1)
        fh.write("\n")


if __name__ == "__main__":
    main()
