#!/usr/bin/env python3
"""Fixtures for the twistmode-eigen tests (scipy/numpy as the outside reference).

Writes into crates/eigen/tests/fixtures/:
  random_pencil.json  a random sparse complex pencil (n = 300, neither Hermitian nor
                      complex-symmetric) as triplets, with all its eigenvalues from the
                      dense QZ algorithm (scipy.linalg.eig(K, M)).
  scipy_written.mtx   the same K written by scipy.io.mmwrite (coordinate complex general),
                      to check that our MatrixMarket reader agrees with scipy's writer.

Run from the workspace root:  python3 tools/eigen_fixtures.py
"""
import json
import os

import numpy as np
import scipy.io
import scipy.linalg
import scipy.sparse as sp

ROOT = os.path.dirname(os.path.dirname(os.path.abspath(__file__)))
OUT = os.path.join(ROOT, "crates", "eigen", "tests", "fixtures")


def random_sparse(rng, n, density):
    a = sp.random(n, n, density=density, random_state=rng, format="coo")
    b = sp.random(n, n, density=density, random_state=rng, format="coo")
    # same pattern for real and imaginary parts is not needed: sum two patterns
    return (a + 1j * b).tocoo()


def triplets(a):
    a = a.tocoo()
    return [[int(i), int(j), float(v.real), float(v.imag)] for i, j, v in zip(a.row, a.col, a.data)]


def main():
    os.makedirs(OUT, exist_ok=True)
    rng = np.random.default_rng(20240611)
    n = 300
    k = random_sparse(rng, n, 0.02) + sp.diags(rng.uniform(1.0, 10.0, n) + 1j * rng.uniform(-1.0, 1.0, n))
    m = sp.eye(n, dtype=complex) + 0.1 * random_sparse(rng, n, 0.01)
    k = k.tocsc()
    m = m.tocsc()
    w = scipy.linalg.eig(k.toarray(), m.toarray(), right=False)
    w = w[np.isfinite(w)]
    data = {
        "source": "tools/eigen_fixtures.py: scipy.linalg.eig (LAPACK zggev, QZ) on the dense pencil",
        "n": n,
        "k": triplets(k),
        "m": triplets(m),
        "eigenvalues": [[float(z.real), float(z.imag)] for z in w],
    }
    with open(os.path.join(OUT, "random_pencil.json"), "w") as f:
        json.dump(data, f)
    scipy.io.mmwrite(os.path.join(OUT, "scipy_written.mtx"), k, symmetry="general", precision=17)
    print(f"wrote {OUT}: n={n}, nnz(K)={k.nnz}, nnz(M)={m.nnz}, {len(w)} eigenvalues")


if __name__ == "__main__":
    main()
