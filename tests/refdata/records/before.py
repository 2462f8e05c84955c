#!/usr/bin/env python3
"""Run the command line on the records of this folder and tabulate it against the reference fits.

    python3 tests/refdata/records/before.py run   [OUTDIR]   # needs target/release/finespike
    python3 tests/refdata/records/before.py table [OUTDIR]   # Markdown table on stdout
    python3 tests/refdata/records/before.py after [OUTDIR]         # the tool after issue 12
    python3 tests/refdata/records/before.py table-after [OUTDIR]   # its table (AFTER.md)

Used for BEFORE.md (the tool as of the commit named there) and, with `after`/`table-after`, for
AFTER.md.  Raw outputs go to OUTDIR (default /tmp/refruns, /tmp/refruns_after for the `after`
modes), never into git.

`after` runs the tool that reads `n,value` itself on the original NAME.csv (no copies), with
`--rate R` when the reference fit has a rate other than 1 (`visible` 1000, `close_pair` 250) and
`--detrend` matching the reference fit's polynomial degree (0: mean, 1: linear, D: poly:D); same
methods, same two settings, same timeout, times and load as `run`.  `table-after` scores the tool's
`lines` (each cosine once at f in [0, 1/2] with its phasor amplitude): no folding or grouping, the
same one-bin matching and extra-line counting as below.

The tool of that commit reads `n,re,im`, so each record is copied to OUTDIR with im = 0; indices
are kept as written unless the tool refuses them (exit 3 naming an index), then shifted to start
at 0 (a shift changes phases, not frequencies).  Every method runs with its default settings and
again with --sigma set to the reference fit's residual std, under `timeout 300`, one at a time; wall time and the CPU time (user + system) of the process are
recorded with the load average before each run, since the machine may be shared.

Scoring (the tool reports complex spikes at positions p in [0, 1) cycles/sample):
* fold each position to f = p (p <= 1/2) or 1 - p (p > 1/2), conjugating the amplitude of the
  folded ones, so the pair (A/2)e^{+-i phi} at +-f of a real cosine becomes one line A e^{i phi};
* group folded spikes less than half a bin (0.5/span) apart into one line: frequency = |amplitude|
  weighted mean, amplitude = |sum of the members' amplitudes|;
* match lines to the reference lines one-to-one (scipy linear_sum_assignment on |f - f_ref|, pairs
  more than one bin (1/span) apart never matched); the rest of the reference lines are missed, the rest
  of the lines are extra.
Frequency errors are in the record's unit (Hz, cycles/week, cycles/year, cycles/sample).  Extra lines
are counted below and above 2 bins (2/span) from zero frequency; the strongest single spike above 2 bins
is shown as 2|a| (a real cosine's spikes carry A/2 each) so a near-cancelling pair that the grouping merges
still shows when it is the largest thing the tool reported.
"""

import json
import os
import subprocess
import sys
import time

import numpy as np
from scipy.optimize import linear_sum_assignment

HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.abspath(os.path.join(HERE, "..", "..", ".."))
BIN = os.path.join(ROOT, "target", "release", "finespike")
RECORDS = ["visible", "close_pair", "near_zero", "sunspots", "co2", "quad4096"]
METHODS = ["sdp", "ast", "grid", "greedy", "esprit"]
TIMEOUT = 300


def load_record(name):
    rows = np.loadtxt(os.path.join(HERE, name + ".csv"), delimiter=",", skiprows=1)
    return rows[:, 0].astype(int), rows[:, 1]


def write_copy(outdir, name, shift):
    n, x = load_record(name)
    if shift:
        n = n - n.min()
    path = os.path.join(outdir, "%s%s.csv" % (name, "_shift" if shift else ""))
    with open(path, "w") as f:
        f.write("n,re,im\n")
        for ni, xi in zip(n, x):
            f.write("%d,%s,0\n" % (ni, repr(float(xi))))
    return path


def run_one(path, method, sigma, stem, extra=()):
    cmd = ["timeout", str(TIMEOUT), BIN, "recover", "--input", path, "--method", method] + list(extra)
    if sigma is not None:
        cmd += ["--sigma", repr(sigma)]
    load = float(open("/proc/loadavg").read().split()[0])
    t0 = time.monotonic()
    with open(stem + ".json", "w") as out, open(stem + ".err", "w") as err:
        proc = subprocess.Popen(cmd, stdout=out, stderr=err)
        _, status, usage = os.wait4(proc.pid, 0)  # usage includes the tool, waited for by timeout
        proc.returncode = os.waitstatus_to_exitcode(status)
    secs = time.monotonic() - t0
    return proc.returncode, secs, cmd, usage.ru_utime + usage.ru_stime, load


def run(outdir):
    os.makedirs(outdir, exist_ok=True)
    log = os.path.join(outdir, "runs.jsonl")
    done = set()
    if os.path.exists(log):
        for line in open(log):
            r = json.loads(line)
            done.add((r["record"], r["method"], r["setting"]))
    # the last commit outside this folder: the code the binary was built from (if built at HEAD)
    commit = subprocess.run(["git", "-C", ROOT, "log", "-1", "--format=%h", "--", ".",
                             ":(exclude)tests/refdata/records"], capture_output=True, text=True).stdout.strip()
    for name in RECORDS:
        ref = json.load(open(os.path.join(HERE, name + ".ref.json")))
        path, shifted = write_copy(outdir, name, False), False
        for setting in ("default", "sigma"):
            for method in METHODS:
                if (name, method, setting) in done:
                    continue
                sigma = ref["residual_std"] if setting == "sigma" else None
                stem = os.path.join(outdir, "%s.%s.%s" % (name, method, setting))
                rc, secs, cmd, cpu, load = run_one(path, method, sigma, stem)
                if rc == 3 and not shifted and "index" in open(stem + ".err").read():
                    path, shifted = write_copy(outdir, name, True), True
                    rc, secs, cmd, cpu, load = run_one(path, method, sigma, stem)
                rec = {"record": name, "method": method, "setting": setting, "sigma": sigma,
                       "shifted": shifted, "rc": rc, "seconds": secs, "cpu_seconds": cpu,
                       "load_before": load, "commit": commit,
                       "cmd": " ".join(cmd[2:])}
                with open(log, "a") as f:
                    f.write(json.dumps(rec) + "\n")
                print("%-10s %-6s %-7s rc=%d %7.2fs wall %7.2fs cpu load %.1f"
                      % (name, method, setting, rc, secs, cpu, load), flush=True)


DETREND = {0: "mean", 1: "linear"}  # other degrees D: "poly:D"


def after_options(ref):
    """The tool's options for a record: --rate when the reference has one other than 1, --detrend
    matching the reference fit's polynomial degree, JSON output."""
    opts = []
    if ref["rate"] is not None and ref["rate"] != 1:
        opts += ["--rate", repr(float(ref["rate"]))]
    deg = ref["poly_degree"]
    opts += ["--detrend", DETREND.get(deg, "poly:%d" % deg), "--format", "json"]
    return opts


def run_after(outdir):
    """The tool after issue 12: the original NAME.csv (header n,value) read directly, no copies."""
    os.makedirs(outdir, exist_ok=True)
    log = os.path.join(outdir, "runs.jsonl")
    done = set()
    if os.path.exists(log):
        for line in open(log):
            r = json.loads(line)
            done.add((r["record"], r["method"], r["setting"]))
    commit = subprocess.run(["git", "-C", ROOT, "log", "-1", "--format=%h", "--", ".",
                             ":(exclude)tests/refdata/records"], capture_output=True, text=True).stdout.strip()
    for name in RECORDS:
        ref = json.load(open(os.path.join(HERE, name + ".ref.json")))
        path = os.path.join(HERE, name + ".csv")
        for setting in ("default", "sigma"):
            for method in METHODS:
                if (name, method, setting) in done:
                    continue
                sigma = ref["residual_std"] if setting == "sigma" else None
                stem = os.path.join(outdir, "%s.%s.%s" % (name, method, setting))
                rc, secs, cmd, cpu, load = run_one(path, method, sigma, stem, after_options(ref))
                rec = {"record": name, "method": method, "setting": setting, "sigma": sigma,
                       "shifted": False, "rc": rc, "seconds": secs, "cpu_seconds": cpu,
                       "load_before": load, "commit": commit,
                       "cmd": " ".join(cmd[2:])}
                with open(log, "a") as f:
                    f.write(json.dumps(rec) + "\n")
                print("%-10s %-6s %-7s rc=%d %7.2fs wall %7.2fs cpu load %.1f"
                      % (name, method, setting, rc, secs, cpu, load), flush=True)


def fold(spikes, span):
    items = []
    for s in spikes:
        p = s["position"] % 1.0
        a = complex(*s["amplitude"])
        if p > 0.5:
            p, a = 1.0 - p, a.conjugate()
        items.append((p, a))
    items.sort(key=lambda t: t[0])
    groups = []
    for p, a in items:
        if groups and p - groups[-1][-1][0] < 0.5 / span:
            groups[-1].append((p, a))
        else:
            groups.append([(p, a)])
    lines = []
    for g in groups:
        w = np.array([abs(a) for _, a in g])
        f = float(np.sum(w * np.array([p for p, _ in g])) / np.sum(w)) if np.sum(w) > 0 else g[0][0]
        lines.append({"f": f, "amp": abs(sum(a for _, a in g)), "members": len(g)})
    return lines


def fmt(v):
    return "%.3g" % v if v != 0 else "0"


def warning_tags(warnings):
    """Each warning by its tag (an upper-case head before the colon), else its words before the
    colon when they are few, else its first seven words."""
    tags = []
    for w in warnings:
        head = w.split(":")[0]
        if head.isupper() or len(head.split()) <= 8:
            tags.append(head)
        else:
            tags.append(" ".join(w.split()[:7]) + "…")
    return "; ".join(tags).replace("|", "\\|")


def refused(stem):
    err = open(stem + ".err").read().strip().splitlines()
    msg = [l for l in err if l.startswith("error")]
    status = "refused: " + (msg[0][7:] if msg else (err[-1] if err else "?"))
    status = status.replace("|", "\\|")
    return status[:157] + "…" if len(status) > 160 else status


def match(ref, lines, span):
    """One-to-one matching of lines (f in cycles/sample) to the reference lines within one bin."""
    ref_f = [ln["frequency_cps"] for ln in ref["lines"]]
    matched = {}
    if lines:
        cost = np.abs(np.subtract.outer(ref_f, [ln["f"] for ln in lines]))
        # pairs further apart than a bin cost the same large amount, so the assignment never
        # shifts a chain of good matches to save on one bad one
        ri, li = linear_sum_assignment(np.where(cost <= 1.0 / span, cost, 1e6))
        matched = {i: j for i, j in zip(ri, li) if cost[i, j] <= 1.0 / span}
    return matched


def table_after(outdir):
    """The table of `after` runs, scored from the tool's `lines` (each cosine once, f in [0, 1/2],
    the phasor amplitude): no folding and no grouping, the same one-bin matching and the same
    counting of extra lines below and above 2 bins as `table`."""
    rows = [json.loads(l) for l in open(os.path.join(outdir, "runs.jsonl"))]
    print("| method | record | σ | wall / CPU time (s) (load average before) | solve_seconds | exit | status |"
          " spikes → lines | extra lines below 2 bins | extra lines above (largest \\|A\\| at f) |"
          " frequency error per reference line | \\|A\\| / A_ref | strongest line above 2 bins: \\|A\\| at f |"
          " warnings |")
    print("|---|---|---|---:|---:|---:|---|---|---:|---|---|---|---|---|")
    for r in sorted(rows, key=lambda r: (RECORDS.index(r["record"]), METHODS.index(r["method"]),
                                         r["setting"])):
        ref = json.load(open(os.path.join(HERE, r["record"] + ".ref.json")))
        rate = ref["rate"] or 1.0
        span = ref["span"]
        stem = os.path.join(outdir, "%s.%s.%s" % (r["record"], r["method"], r["setting"]))
        sigma = "default" if r["setting"] == "default" else "%.4g" % r["sigma"]
        cells = [""] * 8
        status = ""
        if r["rc"] == 124:
            status = "timeout (%d s)" % TIMEOUT
        else:
            try:
                out = json.load(open(stem + ".json"))
            except (json.JSONDecodeError, FileNotFoundError):
                out = None
            if out is None:
                status = refused(stem)
            else:
                status = out.get("status", "?")
                if isinstance(status, dict):
                    status = json.dumps(status)
                diag = out.get("diagnostics", {})
                if r["setting"] == "default" and diag.get("sigma") is not None:
                    sigma = "default (%s %.4g)" % ("est." if diag.get("sigma_estimated") else "",
                                                    diag["sigma"])
                lines = []
                for ln in out.get("lines", []):
                    f = ln["position"]
                    if not 0.0 <= f <= 0.5:
                        raise SystemExit("%s: line position %r outside [0, 1/2]" % (stem, f))
                    if abs(ln["frequency"] - f * rate) > 1e-9 * max(1.0, abs(ln["frequency"])):
                        raise SystemExit("%s: frequency %r is not position x rate" % (stem, ln["frequency"]))
                    lines.append({"f": f, "amp": ln["abs_amplitude"]})
                matched = match(ref, lines, span)
                e, a = [], []
                for i, rl in enumerate(ref["lines"]):
                    if i in matched:
                        ln = lines[matched[i]]
                        e.append("%+.3g" % ((ln["f"] - rl["frequency_cps"]) * rate))
                        a.append("%.2f" % (ln["amp"] / rl["amplitude"]))
                    else:
                        e.append("missed")
                        a.append("–")
                ex = [ln for j, ln in enumerate(lines) if j not in matched.values()]
                near = [ln for ln in ex if ln["f"] < 2.0 / span]
                far = [ln for ln in ex if ln["f"] >= 2.0 / span]
                extra = "%d" % len(far)
                if far:
                    big = max(far, key=lambda ln: ln["amp"])
                    extra += " (%s at %s)" % (fmt(big["amp"]), fmt(big["f"] * rate))
                above = [ln for ln in lines if ln["f"] >= 2.0 / span]
                top = ""
                if above:
                    big = max(above, key=lambda ln: ln["amp"])
                    top = "%s at %s" % (fmt(big["amp"]), fmt(big["f"] * rate))
                solve = diag.get("solve_seconds")
                cells = ["%.2f" % solve if solve is not None else "",
                         "%d → %d" % (len(out.get("spikes", [])), len(lines)), "%d" % len(near),
                         extra, ", ".join(e), ", ".join(a), top,
                         warning_tags(diag.get("warnings", []))]
        secs = "%.2f / %.2f (load %.1f)" % (r["seconds"], r["cpu_seconds"], r["load_before"])
        solve = cells[0]
        print("| %s | %s | %s | %s | %s | %d | %s | %s |"
              % (r["method"], r["record"], sigma, secs, solve, r["rc"], status,
                 " | ".join(cells[1:])))


def table(outdir):
    rows = [json.loads(l) for l in open(os.path.join(outdir, "runs.jsonl"))]
    print("| method | record | σ | wall / CPU time (s) (load average before) | exit | status | spikes reported → lines (±f folded) | extra lines"
          " below 2 bins | extra lines above (largest \\|A\\| at f) | frequency error per reference line |"
          " \\|A\\| / A_ref | strongest spike above 2 bins: 2\\|a\\| at f | warnings |")
    print("|---|---|---|---:|---:|---|---|---:|---|---|---|---|---|")
    for r in sorted(rows, key=lambda r: (RECORDS.index(r["record"]), METHODS.index(r["method"]),
                                         r["setting"])):
        ref = json.load(open(os.path.join(HERE, r["record"] + ".ref.json")))
        rate = ref["rate"] or 1.0
        span = ref["span"]
        stem = os.path.join(outdir, "%s.%s.%s" % (r["record"], r["method"], r["setting"]))
        sigma = "default" if r["setting"] == "default" else "%.4g" % r["sigma"]
        status, found, low, extra, errs, amps, warns, top = "", "", "", "", "", "", "", ""
        if r["rc"] == 124:
            status = "timeout (%d s)" % TIMEOUT
        else:
            try:
                out = json.load(open(stem + ".json"))
            except (json.JSONDecodeError, FileNotFoundError):
                out = None
            if out is None:
                err = open(stem + ".err").read().strip().splitlines()
                msg = [l for l in err if l.startswith("error")]
                status = "refused: " + (msg[0][7:] if msg else (err[-1] if err else "?"))
                status = status.replace("|", "\\|")
                if len(status) > 160:
                    status = status[:157] + "…"
            else:
                status = out.get("status", "?")
                diag = out.get("diagnostics", {})
                if r["setting"] == "default" and diag.get("sigma") is not None:
                    sigma = "default (%s %.4g)" % ("est." if diag.get("sigma_estimated") else "",
                                                    diag["sigma"])
                tags = []
                for w in diag.get("warnings", []):
                    head = w.split(":")[0]
                    tags.append(head if head.isupper() else " ".join(w.split()[:7]) + "…")
                warns = "; ".join(tags).replace("|", "\\|")
                if isinstance(status, dict):
                    status = json.dumps(status)
                lines = fold(out.get("spikes", []), span)
                def folded(s):
                    p = s["position"] % 1.0
                    return min(p, 1.0 - p)

                above = [s for s in out.get("spikes", []) if folded(s) >= 2.0 / span]
                if above:
                    s = max(above, key=lambda s: abs(complex(*s["amplitude"])))
                    top = "%s at %s" % (fmt(2 * abs(complex(*s["amplitude"]))), fmt(folded(s) * rate))
                found = "%d → %d" % (len(out.get("spikes", [])), len(lines))
                ref_f = [ln["frequency_cps"] for ln in ref["lines"]]
                if lines:
                    cost = np.abs(np.subtract.outer(ref_f, [ln["f"] for ln in lines]))
                    # pairs further apart than a bin cost the same large amount, so the assignment
                    # never shifts a chain of good matches to save on one bad one
                    gated = np.where(cost <= 1.0 / span, cost, 1e6)
                    ri, li = linear_sum_assignment(gated)
                else:
                    ri, li = np.array([], int), np.array([], int)
                matched = {}
                for i, j in zip(ri, li):
                    if cost[i, j] <= 1.0 / span:
                        matched[i] = j
                e, a = [], []
                for i, rl in enumerate(ref["lines"]):
                    if i in matched:
                        ln = lines[matched[i]]
                        e.append("%+.3g" % ((ln["f"] - rl["frequency_cps"]) * rate))
                        a.append("%.2f" % (ln["amp"] / rl["amplitude"]))
                    else:
                        e.append("missed")
                        a.append("–")
                errs, amps = ", ".join(e), ", ".join(a)
                ex = [ln for j, ln in enumerate(lines) if j not in matched.values()]
                near = [ln for ln in ex if ln["f"] < 2.0 / span]
                far = [ln for ln in ex if ln["f"] >= 2.0 / span]
                low = "%d" % len(near)
                extra = "%d" % len(far)
                if far:
                    big = max(far, key=lambda ln: ln["amp"])
                    extra += " (%s at %s)" % (fmt(big["amp"]), fmt(big["f"] * rate))
        secs = "%.2f" % r["seconds"]
        if "cpu_seconds" in r:
            secs += " / %.2f (load %.1f)" % (r["cpu_seconds"], r["load_before"])
        print("| %s | %s | %s | %s | %d | %s | %s | %s | %s | %s | %s | %s | %s |"
              % (r["method"], r["record"], sigma, secs, r["rc"], status, found, low, extra, errs,
                 amps, top, warns))


if __name__ == "__main__":
    default_dir = "/tmp/refruns_after" if sys.argv[1:2] in (["after"], ["table-after"]) else "/tmp/refruns"
    outdir = sys.argv[2] if len(sys.argv) > 2 else default_dir
    if len(sys.argv) < 2 or sys.argv[1] not in ("run", "table", "after", "table-after"):
        sys.exit(__doc__)
    {"run": run, "table": table, "after": run_after, "table-after": table_after}[sys.argv[1]](outdir)
