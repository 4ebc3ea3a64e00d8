#!/usr/bin/env python3
"""Independent reference for twistmode-eigen: scipy's shift-invert ARPACK + SuperLU.

Usage: python3 tools/eigs_reference.py K.mtx M.mtx SIGMA_RE SIGMA_IM COUNT [TOL]

Loads K and M (MatrixMarket), solves K x = lambda M x for the COUNT eigenvalues nearest
sigma with scipy.sparse.linalg.eigs(K, M=M, sigma=sigma, k=COUNT) and prints one JSON
object: wall times (load excluded) and the eigenvalues sorted by distance to sigma.
"""
import json
import sys
import time

import numpy as np
import scipy
import scipy.io
import scipy.sparse.linalg as sla


def main():
    if len(sys.argv) < 6:
        print(__doc__, file=sys.stderr)
        sys.exit(2)
    k_path, m_path = sys.argv[1], sys.argv[2]
    sigma = complex(float(sys.argv[3]), float(sys.argv[4]))
    count = int(sys.argv[5])
    tol = float(sys.argv[6]) if len(sys.argv) > 6 else 0.0
    t0 = time.perf_counter()
    k = scipy.io.mmread(k_path).tocsc().astype(complex)
    m = scipy.io.mmread(m_path).tocsc().astype(complex)
    t1 = time.perf_counter()
    w, v = sla.eigs(k, k=count, M=m, sigma=sigma, tol=tol)
    t2 = time.perf_counter()
    order = np.argsort(np.abs(w - sigma))
    w = w[order]
    v = v[:, order]
    res = []
    for j in range(len(w)):
        x = v[:, j]
        kx = k @ x
        mx = m @ x
        res.append(float(np.linalg.norm(kx - w[j] * mx) / (np.linalg.norm(kx) + abs(w[j]) * np.linalg.norm(mx))))
    print(json.dumps({
        "solver": "scipy.sparse.linalg.eigs (ARPACK shift-invert, SuperLU)",
        "scipy": scipy.__version__,
        "n": k.shape[0],
        "load_seconds": t1 - t0,
        "solve_seconds": t2 - t1,
        "eigenvalues": [[float(z.real), float(z.imag)] for z in w],
        "residuals": res,
    }))


if __name__ == "__main__":
    main()
