"""Independent cross-check of the engine's whole-curve fit with scipy.optimize.least_squares (MINPACK's
Levenberg-Marquardt), on the same data, weights and charge-balance model (de Levie 1993; Davies activity).

Reads one JSON object on stdin:
  {V0, Cb, pKw, A, activity: 'davies'|'none', V: [...], pH: [...], w: [...], start: [pKa..., ve1], repeat?: int,
   jac?: '2-point' | 'analytic'}
'2-point' (the default) lets scipy difference the model itself, so nothing of the engine's derivatives is shared;
'analytic' uses the Jacobian with activity coefficients held fixed (cheaper per iteration).
Prints one JSON object: {x: [...], cost, nfev, seconds: [per-fit wall times]}. Used by the engine's tests and the
benchmark; not part of the app.
"""
import json
import sys
import time

import numpy as np
from scipy.optimize import least_squares

LN10 = np.log(10.0)


def make_model(d):
    V = np.asarray(d["V"], float)
    V0, Cb, A = float(d["V0"]), float(d["Cb"]), float(d["A"])
    KwT = 10.0 ** -float(d["pKw"])
    davies = d["activity"] == "davies"
    n = len(d["start"]) - 1
    Vt = V0 + V
    Na = Cb * V / Vt
    j = np.arange(n + 1)[:, None]
    state = {"x": np.full(V.shape, -7 * LN10), "I": Na + 1e-3}

    def solve(pKa, ve1):
        Ct = Cb * ve1 / Vt
        KT = 10.0 ** -np.asarray(pKa)
        x = state["x"].copy()
        I = state["I"].copy()
        for _ in range(200):
            if davies:
                s = np.sqrt(I)
                Af = A * (s / (1 + s) - 0.3 * I)
                g = 10.0 ** Af
            else:
                Af = np.zeros_like(V)
                g = np.ones_like(V)
            # step k (charge k -> k+1): Kc = KT g^(2k+2); Kw,c = Kw g^2
            h = np.exp(x)
            terms = [np.ones_like(V)]
            for k in range(n):
                terms.append(terms[-1] * KT[k] * g ** (2 * k + 2) / h)
            T = np.vstack(terms)
            alpha = T / T.sum(axis=0)
            nbar = (j * alpha).sum(axis=0)
            m2 = (j * j * alpha).sum(axis=0)
            oh = KwT * g * g / h
            F = h + Na - oh - Ct * nbar
            dF = h + oh + Ct * (m2 - nbar * nbar)
            dx = np.clip(-F / dF, -3, 3)
            x = x + dx
            In = h + Na + 0.5 * Ct * (j * (j - 1) * alpha).sum(axis=0) if davies else I
            done = np.max(np.abs(dx)) < 1e-11 and np.max(np.abs(In - I) / (In + 1e-300)) < 1e-12
            I = In
            if done:
                break
        state["x"], state["I"] = x, I
        return x, Af, alpha, nbar, dF, Ct

    def pH(p):
        x, Af, *_ = solve(p[:n], p[n])
        return -x / LN10 + Af  # pH = -log10(gamma h), log10 gamma = -Af

    def jac(p):
        x, Af, alpha, nbar, dF, Ct = solve(p[:n], p[n])
        cols = []
        for k in range(n):
            s = ((j[k + 1:] - nbar) * alpha[k + 1:]).sum(axis=0)
            cols.append(Ct * s / dF)
        cols.append(-nbar * Cb / Vt / (LN10 * dF))
        return np.column_stack(cols)

    return pH, jac


def main():
    d = json.load(sys.stdin)
    pH_obs = np.asarray(d["pH"], float)
    sw = np.sqrt(np.asarray(d["w"], float))
    x0 = np.asarray(d["start"], float)
    repeat = int(d.get("repeat", 1))
    out = None
    seconds = []
    use_analytic = d.get("jac", "2-point") == "analytic"
    # The cross-check tests iterate to machine precision; the benchmark passes our own stopping tolerance (1e-10).
    tol = float(d.get("tol", 1e-15))
    for _ in range(repeat):
        model, jac = make_model(d)
        t0 = time.perf_counter()
        out = least_squares(
            lambda p: (model(p) - pH_obs) * sw,
            x0,
            jac=(lambda p: jac(p) * sw[:, None]) if use_analytic else "2-point",
            method="lm",
            xtol=tol,
            ftol=tol,
            gtol=tol,
        )
        seconds.append(time.perf_counter() - t0)
    print(json.dumps({"x": out.x.tolist(), "cost": float(out.cost), "nfev": int(out.nfev), "seconds": seconds}))


if __name__ == "__main__":
    main()
