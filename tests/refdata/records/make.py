#!/usr/bin/env python3
"""Real-valued records and outside reference fits for finespike (issue 12, item 11).

Writes, deterministically (fixed seeds), into the folder of this script:

* invented records (scenarios made up for testing; no measured data in them):
  ``visible``, ``quad4096``, ``close_pair``, ``near_zero`` -- ``NAME.csv`` (header ``n,value``) and
  ``NAME.truth.json``;
* public real data bundled in statsmodels: ``sunspots`` (yearly sunspot numbers 1700-2008, NOAA
  National Geophysical Data Center) and ``co2`` (weekly Mauna Loa CO2, Keeling & Whorf 2004, with
  the missing weeks left out) -- ``NAME.csv``;
* for every record an outside reference fit ``NAME.ref.json``: nonlinear least squares
  (scipy.optimize.least_squares) of

      x_n = poly(n) + sum_j A_j cos(2 pi f_j n + phi_j)

  on the samples present, n the index as written in the CSV, f_j in cycles per sample, phases
  referred to n = 0.  Lines are started from peaks of a zero-padded FFT periodogram (one line at a
  time: the highest peak of the residual periodogram of the fit so far), never from the truth.

Python is used to make data and reference values only; no test runs it.
Regenerate with ``python3 tests/refdata/records/make.py`` (numpy, scipy, statsmodels; the versions
used are in README.md and in every ``*.ref.json``).
"""

import json
import math
import os

import numpy as np
import scipy
import scipy.optimize
import statsmodels
import statsmodels.api as sm

HERE = os.path.dirname(os.path.abspath(__file__))
TOL = 1e-15  # ftol = xtol = gtol of least_squares
PAD = 16  # zero-padding factor of the periodogram used for starting values
EULER_GAMMA = 0.5772156649015329


# ---------------------------------------------------------------------------------------------
# writing
# ---------------------------------------------------------------------------------------------


def write_csv(name, n, x):
    path = os.path.join(HERE, name + ".csv")
    with open(path, "w") as f:
        f.write("n,value\n")
        for ni, xi in zip(n, x):
            f.write("%d,%s\n" % (int(ni), repr(float(xi))))


def write_json(name, obj):
    path = os.path.join(HERE, name)
    with open(path, "w") as f:
        json.dump(obj, f, indent=1, allow_nan=False)
        f.write("\n")


def runs_missing(rng, n_samples, fraction, max_run):
    """Offsets (0-based) of missing samples: runs of 1..max_run, never the first or last sample,
    runs separated by at least one present sample, until at least `fraction` is missing."""
    missing = np.zeros(n_samples, dtype=bool)
    target = int(round(fraction * n_samples))
    while missing.sum() < target:
        length = int(rng.integers(1, max_run + 1))
        start = int(rng.integers(1, n_samples - 1 - length))
        lo, hi = start - 1, start + length + 1  # keep a present neighbour on each side
        if missing[lo:hi].any():
            continue
        missing[start : start + length] = True
    return missing


def lines_value(n, lines_cps):
    """sum_j A_j cos(2 pi f_j n + phi_j), f_j in cycles per sample."""
    x = np.zeros(len(n))
    for f, a, p in lines_cps:
        x += a * np.cos(2 * np.pi * f * n + p)
    return x


# ---------------------------------------------------------------------------------------------
# the reference fit
# ---------------------------------------------------------------------------------------------


class Model:
    """poly(n) + sum A_j cos(2 pi f_j n + phi_j), solved in a centred, scaled time t = (n - c)/s
    for conditioning; reported in the written n."""

    def __init__(self, n, x, degree):
        self.n = np.asarray(n, dtype=float)
        self.x = np.asarray(x, dtype=float)
        self.degree = degree
        self.c = 0.5 * (self.n.min() + self.n.max())
        self.s = max(0.5 * (self.n.max() - self.n.min()), 1.0)
        self.t = (self.n - self.c) / self.s
        self.m = self.n - self.c  # centred index, phases of the solve refer to n = c

    # parameters of the solve: [poly in t (degree+1)] + per line [f, a, b],
    # line = a cos(2 pi f m) + b sin(2 pi f m)
    def unpack(self, p):
        d = self.degree + 1
        return p[:d], p[d:].reshape(-1, 3)

    def predict(self, p):
        poly, lines = self.unpack(p)
        y = np.polynomial.polynomial.polyval(self.t, poly)
        for f, a, b in lines:
            w = 2 * np.pi * f * self.m
            y = y + a * np.cos(w) + b * np.sin(w)
        return y

    def residual(self, p):
        return self.predict(p) - self.x

    def jac(self, p):
        poly, lines = self.unpack(p)
        cols = [self.t**k for k in range(self.degree + 1)]
        for f, a, b in lines:
            w = 2 * np.pi * f * self.m
            cw, sw = np.cos(w), np.sin(w)
            cols.append(2 * np.pi * self.m * (-a * sw + b * cw))
            cols.append(cw)
            cols.append(sw)
        return np.column_stack(cols)

    def fit(self, start):
        r = scipy.optimize.least_squares(
            self.residual,
            start,
            jac=self.jac,
            method="lm",
            x_scale="jac",
            ftol=TOL,
            xtol=TOL,
            gtol=TOL,
            max_nfev=100000,
        )
        return r

    def poly_only(self):
        v = np.vander(self.t, self.degree + 1, increasing=True)
        coef, *_ = np.linalg.lstsq(v, self.x, rcond=None)
        return coef


def periodogram_peak(n, e, floor_cps, taken, min_gap):
    """Highest local maximum of the zero-padded periodogram of the residual e (samples placed at
    their indices, zeros in the gaps) with frequency >= floor_cps, at least min_gap from the
    frequencies already taken.  Returns (f, A, phi) with phi referred to n = 0."""
    n = np.asarray(n, dtype=int)
    span = int(n.max() - n.min() + 1)
    size = 1 << int(math.ceil(math.log2(span * PAD)))
    z = np.zeros(size)
    z[n - n.min()] = e
    spec = np.fft.rfft(z)
    power = np.abs(spec) ** 2
    freqs = np.arange(len(spec)) / size
    order = np.argsort(power)[::-1]
    for i in order:
        if i == 0 or i == len(spec) - 1:
            continue
        if not (power[i] >= power[i - 1] and power[i] >= power[i + 1]):
            continue
        f = freqs[i]
        if f < floor_cps or any(abs(f - g) < min_gap for g in taken):
            continue
        # sum_n e_n exp(-i 2 pi f (n - n0)); A ~ 2|S|/count, phase referred to n0 then to 0
        amp = 2 * abs(spec[i]) / len(e)
        phase = np.angle(spec[i]) - 2 * np.pi * f * n.min()
        return f, amp, phase
    raise RuntimeError("no periodogram peak left")


def flatness(n, e):
    """Spectral flatness (geometric / arithmetic mean) of the periodogram of e on the record's own
    grid k/span, k = 1..span//2 - (span even), gaps as zeros.  White Gaussian noise gives about
    exp(-gamma) = 0.561 (periodogram ordinates ~ exponential: E ln I = ln E I - gamma)."""
    n = np.asarray(n, dtype=int)
    span = int(n.max() - n.min() + 1)
    z = np.zeros(span)
    z[n - n.min()] = e
    power = np.abs(np.fft.rfft(z)) ** 2
    top = span // 2 if span % 2 else span // 2 - 1  # leave out 0 and the Nyquist bin
    p = power[1 : top + 1]
    p = p[p > 0]
    return float(np.exp(np.mean(np.log(p))) / np.mean(p))


def lag1(n, e):
    """Lag-1 autocorrelation over the pairs (n, n+1) both present: sum e_n e_{n+1} / sum e_n^2."""
    pos = {int(k): v for k, v in zip(n, e)}
    num = sum(v * pos[k + 1] for k, v in pos.items() if k + 1 in pos)
    return float(num / np.sum(np.asarray(e) ** 2))


def poly_t_to_n(coef_t, c, s):
    """Coefficients in t = (n - c)/s to coefficients in n (ascending powers), and the linear map."""
    d = len(coef_t)
    # n-power k coefficient = sum_j coef_t[j] * C(j,k) * (-c)^(j-k) / s^j
    m = np.zeros((d, d))
    for j in range(d):
        for k in range(j + 1):
            m[k, j] = math.comb(j, k) * (-c) ** (j - k) / s**j
    return m @ coef_t, m


def reference_fit(name, n, x, degree, count, rate, unit, floor_cps=0.0, extra_units=None, notes=""):
    model = Model(n, x, degree)
    span = int(np.max(n) - np.min(n) + 1)
    poly = model.poly_only()
    p = np.array(poly)
    starts = []
    taken = []
    for _ in range(count):
        e = model.x - model.predict(p)
        f, a, ph = periodogram_peak(n, e, floor_cps, taken, 0.5 / span)
        starts.append({"frequency_cps": f, "amplitude": a, "phase": ph})
        taken.append(f)
        # to the centred solve: A cos(2 pi f m + psi), psi = phi + 2 pi f c
        psi = ph + 2 * np.pi * f * model.c
        p = np.concatenate([p, [f, a * np.cos(psi), -a * np.sin(psi)]])
        r = model.fit(p)
        p = r.x
    result = model.fit(p)
    p = result.x
    resid = model.residual(p)
    dof = len(model.x) - len(p)
    sigma2 = float(np.sum(resid**2) / dof)

    # final parameters in the reported form: poly in n, per line f, A, phi (referred to n = 0)
    coef_t, lines = model.unpack(p)
    out_lines = []
    for f, a, b in lines:
        amp = math.hypot(a, b)
        psi = math.atan2(-b, a)
        phi = psi - 2 * math.pi * f * model.c
        phi = (phi + math.pi) % (2 * math.pi) - math.pi
        out_lines.append([f, amp, phi])
    order = np.argsort([-ln[1] for ln in out_lines])
    out_lines = [out_lines[i] for i in order]
    coef_n, tmap = poly_t_to_n(coef_t, model.c, model.s)

    # Jacobian in the reported parameters (poly in t, then f, A, phi per line with phi at n = 0):
    # d/dphi = -A sin(.), d/dA = cos(.), d/df = -A sin(.) 2 pi n
    cols = [model.t**k for k in range(degree + 1)]
    for f, amp, phi in out_lines:
        w = 2 * np.pi * f * model.n + phi
        cols.append(-amp * np.sin(w) * 2 * np.pi * model.n)
        cols.append(np.cos(w))
        cols.append(-amp * np.sin(w))
    jac = np.column_stack(cols)
    cov = sigma2 * np.linalg.inv(jac.T @ jac)
    d = degree + 1
    cov_poly_n = tmap @ cov[:d, :d] @ tmap.T
    se = np.sqrt(np.diag(cov))

    report_lines = []
    for j, (f, amp, phi) in enumerate(out_lines):
        sf, sa, sp = se[d + 3 * j : d + 3 * j + 3]
        entry = {
            "frequency_cps": f,
            "frequency_cps_se": float(sf),
            "frequency": f * rate if rate else f,
            "frequency_se": float(sf * rate) if rate else float(sf),
            "amplitude": amp,
            "amplitude_se": float(sa),
            "phase": phi,
            "phase_se": float(sp),
        }
        for key, factor in (extra_units or {}).items():
            entry["frequency_" + key] = f * factor
        report_lines.append(entry)

    ref = {
        "record": name + ".csv",
        "model": "x_n = poly(n) + sum_j A_j cos(2 pi f_j n + phi_j), n as written, phi_j referred to n = 0",
        "method": "scipy.optimize.least_squares (method 'lm', analytic Jacobian, ftol = xtol = gtol = 1e-15)"
        " on the samples present; solved in t = (n - centre)/half_span, reported in n",
        "start": "one line at a time from the highest peak of the zero-padded (x%d) FFT periodogram of the"
        " residual so far, polynomial from linear least squares; never from a truth" % PAD,
        "versions": {
            "python": "%d.%d.%d" % tuple(__import__("sys").version_info[:3]),
            "numpy": np.__version__,
            "scipy": scipy.__version__,
            "statsmodels": statsmodels.__version__,
        },
        "rate": rate,
        "frequency_unit": unit,
        "first_index": int(np.min(n)),
        "last_index": int(np.max(n)),
        "span": span,
        "samples_present": int(len(n)),
        "resolution_bin": (rate / span) if rate else 1.0 / span,
        "poly_degree": degree,
        "poly": [float(v) for v in coef_n],
        "poly_se": [float(v) for v in np.sqrt(np.diag(cov_poly_n))],
        "line_count": count,
        "line_start_floor_cps": floor_cps,
        "lines": report_lines,
        "starts": starts,
        "residual_std": math.sqrt(sigma2),
        "residual_std_definition": "sqrt(RSS / (samples present - parameters))",
        "residual_lag1_autocorrelation": lag1(n, resid),
        "residual_periodogram_flatness": flatness(n, resid),
        "flatness_definition": "geometric mean / arithmetic mean of the residual periodogram on the bins"
        " k/span, 0 < k/span < 1/2, gaps as zeros; white Gaussian noise gives about exp(-gamma) = %.3f"
        % math.exp(-EULER_GAMMA),
        "solver": {"status": int(result.status), "message": result.message, "nfev": int(result.nfev)},
        "standard_errors": "sqrt(diag(sigma_hat^2 (J^T J)^-1)), J the Jacobian in the reported parameters"
        " at the solution, sigma_hat = residual_std",
    }
    if notes:
        ref["notes"] = notes
    write_json(name + ".ref.json", ref)
    return ref


def check_from_truth(n, x, degree, truth, ref):
    """Verification only (invented records): the same fit started from the truth must reach the
    same minimum as the periodogram start; the reference values themselves never use the truth."""
    model = Model(n, x, degree)
    p = list(model.poly_only())
    rate = truth["rate"] or 1.0
    for line in truth["lines"]:
        f = line["frequency"] / rate
        psi = line["phase"] + 2 * np.pi * f * model.c
        p += [f, line["amplitude"] * np.cos(psi), -line["amplitude"] * np.sin(psi)]
    r = model.fit(np.array(p))
    std = math.sqrt(float(np.sum(r.fun**2)) / (len(model.x) - len(p)))
    got = sorted(r.x[degree + 1 :: 3])
    ours = sorted(ln["frequency_cps"] for ln in ref["lines"])
    diff = max(abs(a - b) for a, b in zip(got, ours))
    rel = abs(std - ref["residual_std"]) / ref["residual_std"]
    if diff > 1e-9 or rel > 1e-9:
        raise RuntimeError("the periodogram start did not reach the minimum found from the truth")
    return {"same_minimum": True, "max_frequency_difference_cps": diff,
            "relative_residual_std_difference": rel}


# ---------------------------------------------------------------------------------------------
# the records
# ---------------------------------------------------------------------------------------------


def ar1(rng, count, rho, innovation_std):
    e = np.empty(count)
    e[0] = rng.normal(0.0, innovation_std / math.sqrt(1 - rho * rho))  # stationary start
    for i in range(1, count):
        e[i] = rho * e[i - 1] + rng.normal(0.0, innovation_std)
    return e


def invented(name, seed, rate, first, count, trend_n, noise, lines, missing_fraction=0.0, max_run=5):
    """An invented record: trend (coefficients in the written n, ascending) + lines + noise.
    lines: (frequency in the record's unit, amplitude, phase or None for a random phase)."""
    rng = np.random.default_rng(seed)
    n = np.arange(first, first + count)
    phases = [p if p is not None else float(rng.uniform(-np.pi, np.pi)) for (_, _, p) in lines]
    cps = [(f / rate if rate else f, a, p) for (f, a, _), p in zip(lines, phases)]
    x = np.polynomial.polynomial.polyval(n.astype(float), trend_n) + lines_value(n, cps)
    if noise["kind"] == "ar1":
        x += ar1(rng, count, noise["rho"], noise["innovation_std"])
    else:
        x += rng.normal(0.0, noise["std"], count)
    keep = np.ones(count, dtype=bool)
    if missing_fraction > 0:
        keep = ~runs_missing(rng, count, missing_fraction, max_run)
    write_csv(name, n[keep], x[keep])
    truth = {
        "invented": True,
        "description": "invented test record (a made-up scenario, not a measurement)",
        "rate": rate,
        "first_index": int(first),
        "trend": [float(v) for v in trend_n],
        "noise": noise,
        "lines": [
            {"frequency": f, "amplitude": a, "phase": p} for (f, a, _), p in zip(lines, phases)
        ],
        "missing_indices": [int(v) for v in n[~keep]],
        "notes": "trend: coefficients of 1, n, n^2, ... in the written index n; frequency in Hz when"
        " rate is given, else cycles per sample; phase in rad referred to n = 0",
    }
    write_json(name + ".truth.json", truth)
    return n[keep], x[keep], truth


def main():
    made = []

    # 1. The visible case of issue 12: 1 kHz, indices from 1000, offset 2 at the first sample and
    #    a slope of 0.001 per sample, AR(1) red noise, ~3 % missing in runs of 1..5.
    n, x, t = invented(
        "visible",
        seed=20261201,
        rate=1000.0,
        first=1000,
        count=512,
        trend_n=[2.0 - 0.001 * 1000, 0.001],
        noise={"kind": "ar1", "rho": 0.9, "innovation_std": 0.05,
               "stationary_std": 0.05 / math.sqrt(1 - 0.81)},
        lines=[(123.4, 1.0, None), (150.0, 0.6, None), (371.1, 0.3, None)],
        missing_fraction=0.03,
    )
    made.append(("visible", n, x, 1, 3, 1000.0, "Hz", 0.0, None, ""))

    # 2. A long record: quadratic trend, white noise, lines at several SNRs (A^2/(2 sigma^2) =
    #    1/2, 1/8, 1/50, 1/200, i.e. -3, -9, -17, -23 dB per sample).
    n, x, t = invented(
        "quad4096",
        seed=20261202,
        rate=None,
        first=0,
        count=4096,
        trend_n=[3.0, 2.0e-3, -4.0e-7],
        noise={"kind": "white", "std": 1.0},
        lines=[(0.0437, 1.0, None), (0.1713, 0.5, None), (0.3301, 0.2, None), (0.4412, 0.1, None)],
    )
    made.append(("quad4096", n, x, 2, 4, None, "cycles/sample", 0.0, None, ""))

    # 3. Two lines 1.7 periodogram bins (1/N) apart: a periodogram shows two peaks; below the TV
    #    theory's 2/fc = 4/(N-1).  Offset only.
    count = 256
    f1 = 40.0
    f2 = f1 + 1.7 * 250.0 / count
    n, x, t = invented(
        "close_pair",
        seed=20261203,
        rate=250.0,
        first=0,
        count=count,
        trend_n=[0.5],
        noise={"kind": "white", "std": 0.1},
        lines=[(f1, 1.0, 0.3), (f2, 0.8, 2.2)],
    )
    made.append(("close_pair", n, x, 0, 2, 250.0, "Hz", 0.0, None, ""))

    # 4. A line 0.7 bins from zero frequency beside an offset of 5, and one ordinary line;
    #    indices start at 500.
    count = 300
    n, x, t = invented(
        "near_zero",
        seed=20261204,
        rate=None,
        first=500,
        count=count,
        trend_n=[5.0],
        noise={"kind": "white", "std": 0.05},
        lines=[(0.7 / count, 1.0, None), (0.1, 0.5, None)],
    )
    made.append(("near_zero", n, x, 0, 2, None, "cycles/sample", 0.0, None, ""))

    # 5. Yearly sunspot numbers 1700-2008 (statsmodels.datasets.sunspots), n = year.
    df = sm.datasets.sunspots.load_pandas().data
    n = df["YEAR"].to_numpy().astype(int)
    x = df["SUNACTIVITY"].to_numpy().astype(float)
    write_csv("sunspots", n, x)
    made.append(("sunspots", n, x, 0, 3, 1.0, "cycles/year", 0.0, None,
                 "public real data; mean only and the three strongest periodogram peaks"))

    # 6. Weekly Mauna Loa CO2 (statsmodels.datasets.co2), n = week number from the first week
    #    (1958-03-29), only the weeks with a value (the gaps remain).
    df = sm.datasets.co2.load_pandas().data
    weeks = np.arange(len(df))
    vals = df["co2"].to_numpy().astype(float)
    present = ~np.isnan(vals)
    n, x = weeks[present], vals[present]
    write_csv("co2", n, x)
    made.append(("co2", n, x, 2, 2, 1.0, "cycles/week", 0.005,
                 {"cycles_per_year": 365.25 / 7.0},
                 "public real data; quadratic trend, the annual cycle and its first harmonic;"
                 " starting peaks searched above 0.005 cycles/week (periods below 200 weeks) so the"
                 " decadal wander left by the quadratic does not take a line (with a third line the"
                 " fit puts it on that wander at 0.0053 cycles/week, not on the second harmonic)"))

    for name, n, x, degree, count, rate, unit, floor, extra, notes in made:
        ref = reference_fit(name, n, x, degree, count, rate, unit, floor, extra, notes)
        truth_path = os.path.join(HERE, name + ".truth.json")
        if os.path.exists(truth_path):
            ref["check_from_truth"] = check_from_truth(n, x, degree, json.load(open(truth_path)), ref)
            write_json(name + ".ref.json", ref)
        print(
            "%-11s N=%5d present=%5d sigma=%.4g lag1=%.3f flat=%.3f  %s"
            % (
                name,
                ref["span"],
                ref["samples_present"],
                ref["residual_std"],
                ref["residual_lag1_autocorrelation"],
                ref["residual_periodogram_flatness"],
                "; ".join(
                    "%.6g±%.2g %s A=%.4g±%.2g" % (ln["frequency"], ln["frequency_se"], unit,
                                                  ln["amplitude"], ln["amplitude_se"])
                    for ln in ref["lines"]
                ),
            )
        )


if __name__ == "__main__":
    main()
