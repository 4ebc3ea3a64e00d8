#!/usr/bin/env python3
"""Independent high-precision reference values for crates/reference.

Writes JSON fixtures into crates/reference/tests/fixtures/. Everything here is
computed with mpmath (40 significant digits) from its own Bessel functions
(besselj, bessely, besselk, besseljzero, airyaizero) and its own root finder
(mpmath.findroot), so the Rust code is checked against an implementation that
shares nothing with it but the equations.

Equations (same sources as the Rust docs):
  * Mie sphere: zeros of the denominators of the Mie coefficients a_l (TM)
    and b_l (TE), Bohren & Huffman, "Absorption and Scattering of Light by
    Small Particles", eq. 4.53, with mu = 1, written here in the raw product
    form  psi_l(mx) xi_l'(x) - m psi_l'(mx) xi_l(x)  (TE)  and
    m psi_l(mx) xi_l'(x) - psi_l'(mx) xi_l(x)  (TM),  x = n_out k0 a.
    Roots are isolated with the argument principle (winding number of the
    denominator round boxes, split until each holds one zero) in the strip
    0.05 <= Re x, -(2 w + 1/2) <= Im x <= 1/2, w = ln((m+1)/(m-1)) / (2m);
    the radial order p counts them by increasing Re x. The asymptotic
    positions of Lam, Leung & Young, JOSA B 9, 1585 (1992) only size the box.
  * Metal cavities: Pozar, Microwave Engineering, sec. 6.3 (cylinder); the
    coaxial cross-product equations (Marcuvitz, Waveguide Handbook, sec. 2.4).
  * Step-index fibre: Snyder & Love, Optical Waveguide Theory, ch. 12
    (exact hybrid-mode eigenvalue equation), solved here in the product form
    (eta + kappa)(eta + r kappa) = nu^2 (1/U^2 + 1/W^2)(1/U^2 + r/W^2),
    multiplied by J_nu(U)^2 so that it has no poles.

Run:  python3 tools/reference_fixtures.py [bessel|cavity|fibre|sphere ...]
(all four take about 15 minutes, mostly the fibre scans)
"""

import json
import os

import mpmath as mp

mp.mp.dps = 40

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = os.path.join(HERE, "..", "crates", "reference", "tests", "fixtures")


def f(x):
    """mpf -> Python float (round to nearest double)."""
    return float(x)


def cplx(z):
    z = mp.mpc(z)
    return [float(z.real), float(z.imag)]


# ---------------------------------------------------------------- Bessel values


def sph_j(l, z):
    return mp.sqrt(mp.pi / (2 * z)) * mp.besselj(l + mp.mpf(1) / 2, z)


def sph_y(l, z):
    return mp.sqrt(mp.pi / (2 * z)) * mp.bessely(l + mp.mpf(1) / 2, z)


def bessel_fixture():
    real = []
    for m in (0, 1, 2, 3, 5, 8, 13, 21, 30):
        for x in ("0.05", "0.7", "1.5", "2.404825557695773", "4.2", "9.75", "17.3", "33.1", "61.0"):
            x = mp.mpf(x)
            real.append(
                {
                    "m": m,
                    "x": f(x),
                    "j": f(mp.besselj(m, x)),
                    "y": f(mp.bessely(m, x)),
                    "jp": f(mp.besselj(m, x, 1)),
                    "yp": f(mp.bessely(m, x, 1)),
                    "k": f(mp.besselk(m, x)),
                    # K_m'(x) = -(K_{m-1}(x) + K_{m+1}(x)) / 2   (DLMF 10.29.1)
                    "kp": f(-(mp.besselk(m - 1, x) + mp.besselk(m + 1, x)) / 2),
                }
            )
    spherical = []
    for l in (0, 1, 2, 5, 10, 20, 30, 41):
        for z in ((0.3, 0.0), (1.0, -0.2), (3.7, 0.05), (7.5, -1e-9), (12.0, -0.4), (25.0, -0.01), (44.0, -2.0)):
            zz = mp.mpc(*z)
            j = sph_j(l, zz)
            y = sph_y(l, zz)
            spherical.append({"l": l, "z": cplx(zz), "j": cplx(j), "y": cplx(y), "h1": cplx(j + 1j * y)})
    return {
        "source": "tools/reference_fixtures.py (mpmath besselj/bessely/besselk, 40 digits)",
        "real_order": real,
        "spherical": spherical,
    }


# ---------------------------------------------------------------- Mie sphere


def airy_zero(p):
    """p-th zero of Ai(-x) (positive number)."""
    return -mp.airyaizero(p)


def lly_position(l, p, n, pol):
    """Lam, Leung & Young (1992) asymptotic size parameter of resonance (l, p)."""
    nu = mp.mpf(l) + mp.mpf(1) / 2
    a = airy_zero(p)
    P = n if pol == "TE" else 1 / n
    c = mp.mpf(2) ** (-mp.mpf(1) / 3)
    nx = (
        nu
        + c * a * nu ** (mp.mpf(1) / 3)
        - P / mp.sqrt(n**2 - 1)
        + mp.mpf(3) / 10 * c**2 * a**2 * nu ** (-mp.mpf(1) / 3)
        - c * P * (n**2 - 2 * P**2 / 3) / (n**2 - 1) ** (mp.mpf(3) / 2) * a * nu ** (-mp.mpf(2) / 3)
    )
    return nx / n


def mie_denominator(l, m, pol):
    def psi(z):
        return z * sph_j(l, z)

    def dpsi(z):
        return z * sph_j(l - 1, z) - l * sph_j(l, z)

    def xi(z):
        return z * (sph_j(l, z) + 1j * sph_y(l, z))

    def dxi(z):
        return z * (sph_j(l - 1, z) + 1j * sph_y(l - 1, z)) - l * (sph_j(l, z) + 1j * sph_y(l, z))

    if pol == "TE":
        return lambda x: psi(m * x) * dxi(x) - m * dpsi(m * x) * xi(x)
    return lambda x: m * psi(m * x) * dxi(x) - dpsi(m * x) * xi(x)


def winding_number(fun, corners, base_pts=48):
    """Number of zeros minus poles of fun inside the polygon `corners`
    (counter-clockwise), from the accumulated change of arg fun along it,
    refining any step whose phase change exceeds 0.5 rad."""
    total = mp.mpf(0)
    for k in range(len(corners)):
        a, b = corners[k], corners[(k + 1) % len(corners)]
        ts = [mp.mpf(i) / base_pts for i in range(base_pts + 1)]
        vals = [fun(a + (b - a) * t) for t in ts]
        stack = list(zip(ts[:-1], ts[1:], vals[:-1], vals[1:]))
        while stack:
            t0, t1, v0, v1 = stack.pop()
            d = mp.im(mp.log(v1 / v0))
            if abs(d) > 0.5 and t1 - t0 > mp.mpf(2) ** -40:
                tm = (t0 + t1) / 2
                vm = fun(a + (b - a) * tm)
                stack.append((t0, tm, v0, vm))
                stack.append((tm, t1, vm, v1))
            else:
                total += d
    return int(mp.nint(total / (2 * mp.pi)))


def fabry_perot_width(m):
    """Im-part scale of low-l resonances: ln((m+1)/(m-1)) / (2m)."""
    return mp.log((m + 1) / (m - 1)) / (2 * m)


def roots_in_box(fun, x0, x1, y0, y1, depth=0):
    """All zeros of fun in the box [x0, x1] x [y0, y1]: argument principle,
    the secant method from the centre of a box with one zero, otherwise split the longer
    side (off-centre, so that edges avoid the real axis)."""
    corners = [mp.mpc(x0, y0), mp.mpc(x1, y0), mp.mpc(x1, y1), mp.mpc(x0, y1)]
    count = winding_number(fun, corners)
    if count == 0:
        return []
    if count == 1:
        try:
            c = mp.mpc((x0 + x1) / 2, (y0 + y1) / 2)
            h = min(x1 - x0, y1 - y0) / 10
            r = mp.findroot(fun, (c, c + h), solver="secant", maxsteps=100)
            if x0 <= mp.re(r) <= x1 and y0 <= mp.im(r) <= y1:
                return [r]
        except (ValueError, ZeroDivisionError):
            pass
    if depth > 40:
        raise SystemExit(f"root isolation failed in box {corners}")
    t = mp.mpf("0.4721")
    if x1 - x0 >= y1 - y0:
        xm = x0 + t * (x1 - x0)
        return roots_in_box(fun, x0, xm, y0, y1, depth + 1) + roots_in_box(fun, xm, x1, y0, y1, depth + 1)
    ym = y0 + t * (y1 - y0)
    return roots_in_box(fun, x0, x1, y0, ym, depth + 1) + roots_in_box(fun, x0, x1, ym, y1, depth + 1)


def lowest_resonances(fun, l, m, pol, count):
    """The `count` zeros of lowest Re x in the strip
    0.05 <= Re x, -(2 w + 1/2) <= Im x <= 1/2, w = fabry_perot_width(Re m)."""
    mr = mp.re(m)
    bottom = -(2 * fabry_perot_width(mr) + mp.mpf("0.5"))
    right = lly_position(l, count, mr, pol) + mp.pi / mr / 2
    while winding_number(fun, [mp.mpc(0.05, bottom), mp.mpc(right, bottom), mp.mpc(right, 0.5), mp.mpc(0.05, 0.5)]) < count:
        right += mp.pi / mr / 2
    roots = sorted(roots_in_box(fun, mp.mpf("0.05"), right, bottom, mp.mpf("0.5")), key=lambda r: mp.re(r))
    # polish at full precision
    return [mp.findroot(fun, r, solver="secant") for r in roots[:count]]


def sphere_fixture():
    cases = []
    for n in (mp.mpf("1.5"), mp.mpf(2), mp.mpf(3)):
        for pol in ("TE", "TM"):
            for l in (1, 5, 10, 20, 30):
                fun = mie_denominator(l, n, pol)
                roots = lowest_resonances(fun, l, n, pol, 3)
                for p, x in enumerate(roots, start=1):
                    cases.append(
                        {
                            "n": [f(n), 0.0],
                            "n_out": 1.0,
                            "pol": pol,
                            "l": l,
                            "p": p,
                            "k0a": cplx(x),
                            "q": f(mp.re(x) / (2 * abs(mp.im(x)))),
                            "lly": f(lly_position(l, p, n, pol)),
                        }
                    )
                print(f"sphere n={n} {pol} l={l}: {[mp.nstr(r, 12) for r in roots]}", flush=True)
    # a lossy sphere in a host medium (relative index m = n / n_out)
    n_c, n_out = mp.mpc("2.2", "0.01"), mp.mpf("1.33")
    for pol in ("TE", "TM"):
        for l in (4, 12):
            m = n_c / n_out
            roots = lowest_resonances(mie_denominator(l, m, pol), l, m, pol, 2)
            for p, x in enumerate(roots, start=1):
                k0a = x / n_out
                cases.append(
                    {
                        "n": cplx(n_c),
                        "n_out": f(n_out),
                        "pol": pol,
                        "l": l,
                        "p": p,
                        "k0a": cplx(k0a),
                        "q": f(mp.re(k0a) / (2 * abs(mp.im(k0a)))),
                        "lly": None,
                    }
                )
    return {
        "source": "tools/reference_fixtures.py (mpmath findroot on Bohren & Huffman eq. 4.53 denominators)",
        "airy_zeros": [f(airy_zero(p)) for p in range(1, 11)],
        "cases": cases,
    }


# ---------------------------------------------------------------- cavities

C0 = mp.mpf(299792458)


def cylinder_modes(a, d, count):
    a, d = mp.mpf(float(a)), mp.mpf(float(d))
    modes = []
    kmax = mp.mpf(0)
    # enumerate generously: all TM/TE with m <= 12, n <= 6, p <= 8 and keep the lowest
    for m in range(0, 13):
        for n in range(1, 7):
            x_tm = mp.besseljzero(m, n)
            x_te = mp.besseljzero(m, n + 1, 1) if m == 0 else mp.besseljzero(m, n, 1)
            for p in range(0, 9):
                modes.append(("TM", m, n, p, mp.sqrt((x_tm / a) ** 2 + (p * mp.pi / d) ** 2)))
                if p >= 1:
                    modes.append(("TE", m, n, p, mp.sqrt((x_te / a) ** 2 + (p * mp.pi / d) ** 2)))
    modes.sort(key=lambda t: t[4])
    out = modes[:count]
    kmax = out[-1][4]
    # the enumeration limits must not have cut anything below kmax
    assert mp.besseljzero(13, 1, 1) / a > kmax and mp.besseljzero(0, 8, 1) / a > kmax and 9 * mp.pi / d > kmax
    return [{"kind": t[0], "m": t[1], "n": t[2], "p": t[3], "k": f(t[4])} for t in out]


def coax_cutoffs(m, a, b, kind, kmax):
    """All cut-off wavenumbers k_c < kmax of the annulus a < r < b
    (TM: J_m(k a) Y_m(k b) - J_m(k b) Y_m(k a) = 0; TE: the same with
    derivatives). The Rayleigh quotient gives k_c > m / b, so the scan starts
    there; roots are spaced about pi / (b - a), the scan step is 1/40 of that."""
    if kind == "TM":
        g = lambda k: mp.besselj(m, k * a) * mp.bessely(m, k * b) - mp.besselj(m, k * b) * mp.bessely(m, k * a)
    else:
        g = lambda k: mp.besselj(m, k * a, 1) * mp.bessely(m, k * b, 1) - mp.besselj(m, k * b, 1) * mp.bessely(m, k * a, 1)
    roots = []
    start = max(mp.mpf(m) / b, mp.mpf("1e-3") / b)
    if start >= kmax:
        return roots
    h = mp.pi / (b - a) / 40
    k0 = start * (1 + mp.mpf(10) ** -9) + h / 7
    g0 = g(k0)
    while k0 < kmax:
        k1 = k0 + h
        g1 = g(k1)
        if g0 * g1 < 0:
            roots.append(mp.findroot(g, (k0, k1), solver="anderson"))
        k0, g0 = k1, g1
    return [k for k in roots if k < kmax]


def coax_modes(a, b, d, count):
    a, b, d = (mp.mpf(float(t)) for t in (a, b, d))
    # TEM_p alone gives `count` modes up to count * pi / d; grow kmax from a
    # smaller guess until `count` modes lie below it.
    kmax = mp.pi / (b - a)
    while True:
        modes = [("TEM", 0, 0, p, p * mp.pi / d) for p in range(1, count + 1) if p * mp.pi / d < kmax]
        m = 0
        while m / b < kmax:
            for kind in ("TM", "TE"):
                for n, kc in enumerate(coax_cutoffs(m, a, b, kind, kmax), start=1):
                    p = 0 if kind == "TM" else 1
                    while mp.sqrt(kc**2 + (p * mp.pi / d) ** 2) < kmax:
                        modes.append((kind, m, n, p, mp.sqrt(kc**2 + (p * mp.pi / d) ** 2)))
                        p += 1
            m += 1
        if len(modes) >= count:
            break
        kmax *= mp.mpf("1.5")
    modes.sort(key=lambda t: t[4])
    out = modes[:count]
    return [{"kind": t[0], "m": t[1], "n": t[2], "p": t[3], "k": f(t[4])} for t in out]


def cavity_fixture():
    cyl = []
    for a, d in (("0.012", "0.030"), ("0.020", "0.008")):
        cyl.append({"a": f(mp.mpf(a)), "d": f(mp.mpf(d)), "modes": cylinder_modes(a, d, 15)})
    coax = []
    for a, b, d in (("0.002", "0.007", "0.025"), ("0.004", "0.010", "0.006")):
        coax.append({"a": f(mp.mpf(a)), "b": f(mp.mpf(b)), "d": f(mp.mpf(d)), "modes": coax_modes(a, b, d, 15)})
    zeros = {
        "j_zeros": [[m, n, f(mp.besseljzero(m, n))] for m in range(0, 6) for n in range(1, 6)],
        "jp_zeros": [[m, n, f(mp.besseljzero(m, n + 1 if m == 0 else n, 1))] for m in range(0, 6) for n in range(1, 6)],
    }
    return {
        "source": "tools/reference_fixtures.py (mpmath besseljzero; coaxial roots by mpmath findroot)",
        "bessel_zeros": zeros,
        "cylinder": cyl,
        "coaxial": coax,
    }


# ---------------------------------------------------------------- fibre


def fibre_modes(a, n1, n2, lam):
    # inputs rounded to doubles first, so that Rust solves exactly the same problem
    a, n1, n2, lam = (mp.mpf(float(t)) for t in (a, n1, n2, lam))
    k0 = 2 * mp.pi / lam
    V = k0 * a * mp.sqrt(n1**2 - n2**2)
    r = n2**2 / n1**2
    out = []

    def scan(g, label):
        steps = int(max(400, 60 * V))  # roots of one branch are ~pi apart in U
        roots = []
        us = [V * (i + mp.mpf("0.5")) / steps for i in range(steps)]
        # HE_1m modes (m >= 2) approach cut-off with W -> 0 exponentially fast:
        # sample geometrically close to U = V as well
        us += [V * (1 - mp.mpf(10) ** -k) for k in range(4, 15)]
        gs = [g(u) for u in us]
        for i in range(len(us) - 1):
            if gs[i] * gs[i + 1] < 0:
                roots.append(mp.findroot(g, (us[i], us[i + 1]), solver="anderson"))
        # same reporting rule as the Rust code: W > 1e-6 V
        return [u for u in roots if W(u) > mp.mpf("1e-6") * V]

    def W(u):
        return mp.sqrt(V**2 - u**2)

    # TE0m and TM0m
    te = lambda u: W(u) * mp.besselj(1, u) * mp.besselk(0, W(u)) + u * mp.besselj(0, u) * mp.besselk(1, W(u))
    tm = lambda u: n1**2 * W(u) * mp.besselj(1, u) * mp.besselk(0, W(u)) + n2**2 * u * mp.besselj(0, u) * mp.besselk(1, W(u))
    for kind, g in (("TE", te), ("TM", tm)):
        for m, u in enumerate(scan(g, kind), start=1):
            out.append((kind, 0, m, u))
    # hybrid modes: product form without poles
    nu = 1
    while True:
        def kap(u, nu=nu):
            w = W(u)
            # K_nu'(w) = -(K_{nu-1}(w) + K_{nu+1}(w)) / 2   (DLMF 10.29.1)
            kp = -(mp.besselk(nu - 1, w) + mp.besselk(nu + 1, w)) / 2
            return kp / (w * mp.besselk(nu, w))

        def prod(u, nu=nu):
            w = W(u)
            jn = mp.besselj(nu, u)
            jd = mp.besselj(nu, u, 1) / u
            k = kap(u)
            R = nu**2 * (1 / u**2 + 1 / w**2) * (1 / u**2 + r / w**2)
            return u**4 * ((jd + k * jn) * (jd + r * k * jn) - R * jn**2)

        roots = scan(prod, "hybrid")
        if not roots:
            break
        he, eh = [], []
        for u in roots:
            eta = mp.besselj(nu, u, 1) / (u * mp.besselj(nu, u))
            (he if eta + kap(u) * (1 + r) / 2 < 0 else eh).append(u)
        for m, u in enumerate(he, start=1):
            out.append(("HE", nu, m, u))
        for m, u in enumerate(eh, start=1):
            out.append(("EH", nu, m, u))
        nu += 1
    modes = []
    for kind, nu, m, u in out:
        neff = mp.sqrt(n1**2 - (u / (k0 * a)) ** 2)
        modes.append({"kind": kind, "nu": nu, "m": m, "u": f(u), "n_eff": f(neff)})
    modes.sort(key=lambda t: -t["n_eff"])
    return {"a": f(a), "n1": f(n1), "n2": f(n2), "wavelength": f(lam), "k0": f(k0), "v": f(V), "modes": modes}


def fibre_fixture():
    cases = [
        fibre_modes("4.1e-6", "1.4504", "1.4447", "1.55e-6"),  # V ~ 2.1, single mode
        fibre_modes("5.0e-6", "1.50", "1.45", "1.5e-6"),  # V ~ 8.0, many modes
        fibre_modes("0.45e-6", "2.05", "1.0", "1.3e-6"),  # V ~ 3.9, strong contrast
    ]
    for c in cases:
        print(f"fibre V={c['v']:.4f}: {len(c['modes'])} modes")
    return {"source": "tools/reference_fixtures.py (mpmath besselj/besselk, Snyder & Love ch. 12)", "cases": cases}


def write(name, data):
    os.makedirs(OUT, exist_ok=True)
    path = os.path.join(OUT, name)
    with open(path, "w") as fh:
        json.dump(data, fh, indent=1)
        fh.write("\n")
    print("wrote", os.path.relpath(path))


if __name__ == "__main__":
    import sys

    builders = {"bessel": bessel_fixture, "cavity": cavity_fixture, "fibre": fibre_fixture, "sphere": sphere_fixture}
    # optional arguments: a subset of the fixture names above
    for name in sys.argv[1:] or builders:
        write(name + ".json", builders[name]())
