#!/usr/bin/python3
"""Peer timing for the Oddsmith speed benchmark: scikit-learn and statsmodels fits on the SAME data
files bench/generate.ts wrote (column-major little-endian float64, see that file's header).

Usage: /usr/bin/python3 bench/peers/python_peer.py DATASET TOOL SOLVER WARMUP RUNS [BUDGET_SECONDS]
  TOOL = sklearn   SOLVER in lbfgs | newton-cg | newton-cholesky   (penalty=None, unpenalized)
  TOOL = statsmodels SOLVER = newton   (Logit for binary sets, MNLogit for multi-class sets)

Only the fit call is timed (time.perf_counter), after WARMUP untimed fits; the data is loaded and
laid out in the library's preferred memory order outside the timed region. Prints one JSON object:
times (seconds), cpu (process CPU seconds per timed fit), median, logLik of the last fit (computed the
same way for every tool), iterations.

Bounded run counts (shared with bench/run.ts): when one fit takes longer than LONG_FIT_SECONDS the
warm-up fit is counted as a timed run (first-call costs are then negligible; "coldFirst" says so),
and timed runs stop once their total passes BUDGET_SECONDS (at least one run is always made).
"""
import json
import os
import statistics
import sys
import time
import warnings

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))
DATA = os.path.join(os.path.dirname(HERE), "data")

# Tight enough that every solver reaches the maximum-likelihood optimum to ~1e-8 relative in
# log-likelihood on these data sets (checked against statsmodels' Newton fit, printed by run.ts).
SKLEARN_TOL = 1e-8
SKLEARN_MAX_ITER = 10000
STATSMODELS_TOL = 1e-10
STATSMODELS_MAXITER = 100
LONG_FIT_SECONDS = 2.0


def load(name):
    with open(os.path.join(DATA, name + ".json")) as f:
        meta = json.load(f)
    n, d = meta["rows"], meta["cols"]
    X = np.fromfile(os.path.join(DATA, meta["files"]["X"]), dtype="<f8").reshape(d, n).T
    if meta["kind"] == "binary":
        y = np.fromfile(os.path.join(DATA, meta["files"]["y"]), dtype="<f8")
    else:
        y = np.fromfile(os.path.join(DATA, meta["files"]["cls"]), dtype="<i4").astype(np.int64)
    return meta, X, y


def log_lik_from_linear(eta, y, kind):
    """Log-likelihood from linear predictors; stable log-sigmoid / log-softmax."""
    if kind == "binary":
        # y*eta - log(1 + exp(eta)), with logaddexp for stability
        return float(np.sum(y * eta - np.logaddexp(0.0, eta)))
    eta = eta - eta.max(axis=1, keepdims=True)
    lse = np.log(np.exp(eta).sum(axis=1))
    return float(np.sum(eta[np.arange(len(y)), y] - lse))


def timed_runs(fit, warmup, runs, budget):
    """Calls fit() under the bounded-run policy above; returns (times, cpu, coldFirst, last result)."""
    times, cpu, cold_first, result = [], [], False, None
    done_warmup = 0
    while True:
        c0, t0 = time.process_time(), time.perf_counter()
        result = fit()
        t1, c1 = time.perf_counter(), time.process_time()
        if done_warmup < warmup and not (t1 - t0 > LONG_FIT_SECONDS and not times):
            done_warmup += 1
            continue
        if done_warmup < warmup:
            cold_first = True
            done_warmup = warmup
        times.append(t1 - t0)
        cpu.append(c1 - c0)
        if len(times) >= runs or sum(times) + (t1 - t0) > budget:
            break
    return times, cpu, cold_first, result


def run_sklearn(meta, X, y, solver, warmup, runs, budget):
    import sklearn
    from sklearn.linear_model import LogisticRegression

    Xc = np.ascontiguousarray(X)  # sklearn copies to C order inside fit otherwise
    kind = meta["kind"]

    def make():
        kwargs = dict(penalty=None, solver=solver, tol=SKLEARN_TOL, max_iter=SKLEARN_MAX_ITER)
        if kind == "multiclass":
            kwargs["multi_class"] = "multinomial"
        return LogisticRegression(**kwargs)

    def fit():
        model = make()
        model.fit(Xc, y)
        return model

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        times, cpu, cold_first, model = timed_runs(fit, warmup, runs, budget)
    eta = model.decision_function(Xc)
    return {
        "tool": "sklearn",
        "solver": solver,
        "version": sklearn.__version__,
        "times": times,
        "cpu": cpu,
        "coldFirst": cold_first,
        "median": statistics.median(times),
        "logLik": log_lik_from_linear(eta, y, kind),
        "iterations": int(np.max(model.n_iter_)),
        "warnings": sorted({str(w.message)[:160] for w in caught}),
    }


def run_statsmodels(meta, X, y, warmup, runs, budget):
    import statsmodels
    import statsmodels.api as sm

    Xi = np.column_stack([np.ones(X.shape[0]), X])  # intercept column built outside the timed region
    kind = meta["kind"]
    def fit():
        model = sm.Logit(y, Xi) if kind == "binary" else sm.MNLogit(y, Xi)
        return model.fit(method="newton", tol=STATSMODELS_TOL, maxiter=STATSMODELS_MAXITER, disp=0)

    with warnings.catch_warnings(record=True) as caught:
        warnings.simplefilter("always")
        times, cpu, cold_first, res = timed_runs(fit, warmup, runs, budget)
    return {
        "tool": "statsmodels",
        "solver": "newton",
        "version": statsmodels.__version__,
        "times": times,
        "cpu": cpu,
        "coldFirst": cold_first,
        "median": statistics.median(times),
        "logLik": float(res.llf),
        "iterations": int(res.mle_retvals.get("iterations", -1)),
        "converged": bool(res.mle_retvals.get("converged", False)),
        "warnings": sorted({str(w.message)[:160] for w in caught}),
    }


def main():
    name, tool, solver, warmup, runs = sys.argv[1], sys.argv[2], sys.argv[3], int(sys.argv[4]), int(sys.argv[5])
    budget = float(sys.argv[6]) if len(sys.argv) > 6 else 1e9
    meta, X, y = load(name)
    if tool == "sklearn":
        out = run_sklearn(meta, X, y, solver, warmup, runs, budget)
    elif tool == "statsmodels":
        out = run_statsmodels(meta, X, y, warmup, runs, budget)
    else:
        raise SystemExit("unknown tool " + tool)
    out["dataset"] = name
    out["numpy"] = np.__version__
    out["python"] = sys.version.split()[0]
    print(json.dumps(out))


if __name__ == "__main__":
    main()
