#!/usr/bin/python3
"""Reference tables for gapflux's tests, from general-purpose libraries.

Run with Debian's Python (the packages below are Debian's, not PyPI's):

    apt-get install -y python3-iapws python3-scipy python3-vtk9
    /usr/bin/python3 testdata/reference/gen.py            # self-check, then write the tables
    /usr/bin/python3 testdata/reference/gen.py tables DIR # the same, into DIR
    /usr/bin/python3 testdata/reference/gen.py check      # self-check only
    /usr/bin/python3 testdata/reference/gen.py vti FILE   # read FILE with VTK, print JSON

Tables (CSV, '#' header lines name the library and version of every column):

    water_iapws.csv      saturated liquid water, 10-100 degC: IAPWS-95 (density,
                         c_p, expansion, saturation pressure, latent heat),
                         IAPWS 2008 viscosity, IAPWS 2011 conductivity,
                         IAPWS 2014 surface tension (python3-iapws)
    air_lemmon.csv       dry air at 101325 Pa, 250-800 K: Lemmon et al. (2000)
                         equation of state, Lemmon & Jacobsen (2004) viscosity
                         and conductivity (python3-iapws, iapws.humidAir.Air),
                         and the kinetic mean free path from that viscosity
    blackbody_planck.csv F(0->lambda*T) by numerical integration of Planck's
                         law (scipy.integrate.quad), 1000-50000 um*K
    erfcinv_scipy.csv    Y/sigma = sqrt(2)*erfcinv(2 P/H_c) and the exact CMY
                         plastic conductance (scipy.special.erfcinv)

The 'vti' mode imports only vtk, so the Go test that reads a fields.vti back
needs nothing but python3-vtk9. Output is deterministic: fixed formats, no
timestamps; rerunning with the same package versions gives the same bytes.
"""

import json
import math
import os
import subprocess
import sys

HERE = os.path.dirname(os.path.abspath(__file__))
OUT = HERE  # where the tables go; 'tables DIR' changes it

# Second radiation constant c2 = h*c/k_B in um*K (CODATA 2018, from the exact
# SI values of h, c and k_B).
C2_UMK = 14387.76877

# Incropera, DeWitt, Bergman & Lavine, Fundamentals of Heat and Mass Transfer,
# 6th ed., Table 12.1 (blackbody radiation functions), values as read in the
# worked examples: Example 12.9 (p. 766) F(0->3000) = 0.273, F(0->5000) =
# 0.634, F(0->20000) = 0.986; Example 12.10 (p. 768) F(0->6000) = 0.738 and,
# between the rows 1400 and 1600, F(0->1500) = 0.014; Example 12.8 (p. 761)
# F(0->1740) = 0.0335 and F(0->14500) = 0.9664, between rows 1600/1800 and
# 14000/15000. Read in a published copy of those worked examples [S].
# Off-row values are checked as the book gets them: linear interpolation
# between the bracketing rows. Tolerance: half a unit of the last printed
# digit, except at 14500: there the example's 0.9664 is 5.1e-4 above the
# interpolated Planck value, because the table's 15000 row (0.969981, from
# memory [M]) is itself 1.0e-3 above Planck's 0.968934; 6e-4 is allowed.
# (lambda*T um*K, printed F, tolerance, bracketing rows or None)
INCROPERA_T12_1 = [
    (1500.0, 0.014, 0.0005, (1400.0, 1600.0)),
    (1740.0, 0.0335, 0.00005, (1600.0, 1800.0)),
    (3000.0, 0.273, 0.0005, None),
    (5000.0, 0.634, 0.0005, None),
    (6000.0, 0.738, 0.0005, None),
    (14500.0, 0.9664, 0.0006, (14000.0, 15000.0)),
    (20000.0, 0.986, 0.0005, None),
]

PACKAGES = ["python3", "python3-iapws", "python3-scipy", "python3-numpy"]


def deb_versions(names):
    """Debian package versions, as 'name version' strings."""
    out = subprocess.run(["dpkg-query", "-W"] + names, capture_output=True, text=True, check=True).stdout
    return "; ".join(" ".join(line.split("\t")) for line in out.strip().splitlines())


def blackbody_fraction(lt_umk):
    """F(0->lambda*T) = 15/pi^4 * int_{c2/(lambda*T)}^inf x^3/(e^x - 1) dx."""
    from scipy import integrate

    x0 = C2_UMK / lt_umk
    val, err = integrate.quad(lambda x: x ** 3 * math.exp(-x) / -math.expm1(-x), x0, math.inf, epsabs=1e-13, epsrel=1e-12)
    if err > 1e-10:
        raise RuntimeError("quad error %g at %g" % (err, lt_umk))
    return 15.0 / math.pi ** 4 * val


def blackbody_series(lt_umk, terms=200):
    """The same fraction by the series of Chang & Rhee (1984) / Siegel & Howell,
    an independent check of the quadrature."""
    x = C2_UMK / lt_umk
    s = 0.0
    for n in range(1, terms + 1):
        s += math.exp(-n * x) / n * (x ** 3 + 3 * x ** 2 / n + 6 * x / n ** 2 + 6 / n ** 3)
    return 15.0 / math.pi ** 4 * s


def selfcheck():
    """Checks the blackbody quadrature against the series and against the
    printed table values above; raises on failure."""
    worst = 0.0
    for lt in range(1000, 50001, 250):
        worst = max(worst, abs(blackbody_fraction(lt) - blackbody_series(lt)))
    if worst > 1e-10:
        raise SystemExit("blackbody quadrature and series differ by %g" % worst)
    # Stefan-Boltzmann closure: F -> 1 as lambda*T -> inf.
    if abs(blackbody_fraction(1e7) - 1) > 1e-6:
        raise SystemExit("F(0->inf) != 1")
    for lt, want, tol, rows in INCROPERA_T12_1:
        got = blackbody_fraction(lt)
        if rows is not None:
            lo, hi = rows
            flo, fhi = blackbody_fraction(lo), blackbody_fraction(hi)
            got = flo + (lt - lo) / (hi - lo) * (fhi - flo)
        if abs(got - want) > tol + 1e-12:
            raise SystemExit("F(0->%g) = %.5f, Incropera Table 12.1 prints %g" % (lt, got, want))
    print("self-check ok: quadrature vs series %.1e; Incropera Table 12.1 values within their printed digits" % worst)


def write_table(name, header_lines, columns, rows, fmt):
    path = os.path.join(OUT, name)
    with open(path + ".tmp", "w", newline="\n") as f:
        for h in header_lines:
            f.write("# " + h + "\n")
        f.write(",".join(columns) + "\n")
        for r in rows:
            f.write(",".join(fm % v for fm, v in zip(fmt, r)) + "\n")
    os.replace(path + ".tmp", path)
    print("wrote %s (%d rows)" % (path, len(rows)))


def water_table(versions):
    import iapws
    from iapws import IAPWS95

    temps = sorted({round(273.15 + c, 2) for c in range(10, 101, 5)} | {float(t) for t in range(285, 371, 5)})
    rows = []
    for t in temps:
        liq = IAPWS95(T=t, x=0)
        vap = IAPWS95(T=t, x=1)
        rows.append((t, liq.P * 1e6, liq.rho, liq.cp * 1e3, liq.mu, liq.k, liq.Prandt, liq.alfav, liq.sigma,
                     (vap.h - liq.h) * 1e3, vap.rho))
    write_table("water_iapws.csv", [
        "Saturated liquid water (x = 0) and, for h_fg and vapour density, saturated vapour, by python module "
        "iapws %s (IAPWS95 class):" % iapws.__version__,
        "IAPWS-95 (Wagner & Pruss 2002) for p_sat, density, c_p, beta, h_fg; IAPWS 2008 viscosity (Huber et al. "
        "2009); IAPWS 2011 thermal conductivity (Huber et al. 2012); IAPWS 2014 surface tension.",
        "Stated uncertainties (liquid near 0.1 MPa; from memory): density 0.0001-0.0003 %, c_p 0.1 %, viscosity 1 %, "
        "conductivity 1.8 %, surface tension 0.5 %.",
        "Packages: " + versions,
        "Generated by testdata/reference/gen.py; do not edit by hand.",
    ], ["t_k", "p_sat_pa", "rho_kg_m3", "cp_j_kgk", "mu_pa_s", "k_w_mk", "pr", "beta_per_k", "sigma_n_m",
        "h_fg_j_kg", "rho_vap_kg_m3"],
        rows, ["%.2f", "%.7g", "%.7g", "%.7g", "%.7g", "%.7g", "%.7g", "%.7g", "%.7g", "%.7g", "%.7g"])


def air_table(versions):
    import iapws
    from iapws.humidAir import Air

    p_pa = 101325.0
    molar_kg_mol = 28.9586e-3  # Lemmon et al. (2000), the molar mass of the EOS
    r_j_molk = 8.314462618  # CODATA 2018
    rows = []
    for t in range(250, 801, 25):
        a = Air(T=float(t), P=p_pa / 1e6)
        mu, rho, cp = a.mu, a.rho, a.cp * 1e3
        mfp = mu / p_pa * math.sqrt(math.pi * r_j_molk * t / (2 * molar_kg_mol))
        rows.append((t, rho, cp, a.cp / a.cv, mu, mu / rho, a.k, a.k / (rho * cp), cp * mu / a.k, mfp))
    write_table("air_lemmon.csv", [
        "Dry air at 101325 Pa by python module iapws %s (iapws.humidAir.Air): equation of state of Lemmon, "
        "Jacobsen, Penoncello & Friend (2000), J. Phys. Chem. Ref. Data 29:331;" % iapws.__version__,
        "viscosity and thermal conductivity of Lemmon & Jacobsen (2004), Int. J. Thermophys. 25:21.",
        "Stated uncertainties (dilute gas; from memory): c_p 1 %, viscosity 1 %, conductivity 2 %.",
        "mfp_m is the kinetic mean free path (mu/p)*sqrt(pi*R*T/(2*M)) with this mu, R = 8.314462618 J/(mol*K), "
        "M = 28.9586 g/mol (Lemmon 2000).",
        "Packages: " + versions,
        "Generated by testdata/reference/gen.py; do not edit by hand.",
    ], ["t_k", "rho_kg_m3", "cp_j_kgk", "gamma", "mu_pa_s", "nu_m2_s", "k_w_mk", "alpha_m2_s", "pr", "mfp_m"],
        rows, ["%d", "%.7g", "%.7g", "%.7g", "%.7g", "%.7g", "%.7g", "%.7g", "%.7g", "%.7g"])


def blackbody_table(versions):
    import scipy

    lts = list(range(1000, 10000, 100)) + list(range(10000, 20000, 500)) + list(range(20000, 50001, 1000))
    rows = [(lt, blackbody_fraction(lt)) for lt in lts]
    write_table("blackbody_planck.csv", [
        "Blackbody fraction F(0->lambda*T) = (15/pi^4) * integral from c2/(lambda*T) to infinity of x^3/(e^x-1) dx,",
        "c2 = 14387.76877 um*K (CODATA 2018), by scipy %s scipy.integrate.quad (abs. error < 1e-10,"
        " checked against the series of Siegel & Howell and Incropera 6th ed. Table 12.1)." % scipy.__version__,
        "Packages: " + versions,
        "Generated by testdata/reference/gen.py; do not edit by hand.",
    ], ["lambda_t_umk", "fraction"], rows, ["%d", "%.10f"])


def erfcinv_table(versions):
    import scipy
    from scipy import special

    ratios = [m * 10.0 ** e for e in range(-7, 0) for m in (1, 2, 5)] + [0.2, 0.3, 0.4]
    ratios = sorted(set(round(r, 12) for r in ratios if r < 0.5))
    rows = []
    for r in ratios:
        lam = math.sqrt(2) * special.erfcinv(2 * r)
        exact = math.exp(-lam * lam / 2) / (2 * math.sqrt(2 * math.pi) * (1 - math.sqrt(r)) ** 1.5)
        rows.append((r, lam, exact))
    write_table("erfcinv_scipy.csv", [
        "Cooper-Mikic-Yovanovich plastic contact: Y/sigma = sqrt(2)*erfcinv(2*P/H_c) and",
        "h_s*sigma/(m*k_s) = exp(-(Y/sigma)^2/2) / (2*sqrt(2*pi)*(1 - sqrt(P/H_c))^1.5),",
        "with erfcinv from scipy %s scipy.special.erfcinv." % scipy.__version__,
        "Packages: " + versions,
        "Generated by testdata/reference/gen.py; do not edit by hand.",
    ], ["ratio", "y_over_sigma", "hs_sigma_over_m_ks"], rows, ["%.3g", "%.17g", "%.17g"])


def read_vti(path):
    """Reads a VTK XML image-data file with VTK's own reader and prints its
    grid and every point-data array as JSON (NaN as null)."""
    # Only the modules needed: 'import vtk' loads every VTK kit (seconds).
    from vtkmodules.vtkCommonCore import vtkVersion
    from vtkmodules.vtkIOXML import vtkXMLImageDataReader
    from vtkmodules.util.numpy_support import vtk_to_numpy

    r = vtkXMLImageDataReader()
    r.SetFileName(path)
    r.Update()
    if r.GetErrorCode() != 0:
        raise SystemExit("vtk could not read %s (error code %d)" % (path, r.GetErrorCode()))
    img = r.GetOutput()
    pd = img.GetPointData()
    arrays = {}
    for i in range(pd.GetNumberOfArrays()):
        a = pd.GetArray(i)
        vals = vtk_to_numpy(a).tolist()
        arrays[a.GetName()] = {
            "type": a.GetDataTypeAsString(),
            "values": [None if v != v else v for v in vals],  # NaN as null
        }
    json.dump({"vtk": vtkVersion.GetVTKVersion(), "dims": list(img.GetDimensions()),
               "origin": list(img.GetOrigin()), "spacing": list(img.GetSpacing()), "arrays": arrays},
              sys.stdout)
    sys.stdout.write("\n")


def main(argv):
    mode = argv[1] if len(argv) > 1 else "tables"
    if mode == "vti" and len(argv) == 3:
        read_vti(argv[2])
    elif mode == "check":
        selfcheck()
    elif mode == "tables" and len(argv) <= 3:
        global OUT
        if len(argv) == 3:
            OUT = argv[2]
        selfcheck()
        versions = deb_versions(PACKAGES)
        water_table(versions)
        air_table(versions)
        blackbody_table(deb_versions(["python3", "python3-scipy"]))
        erfcinv_table(deb_versions(["python3", "python3-scipy"]))
    else:
        raise SystemExit("usage: gen.py [tables [DIR] | check | vti FILE]")


if __name__ == "__main__":
    main(sys.argv)
