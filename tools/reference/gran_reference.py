#!/usr/bin/env python3
"""Outside reference for phdose's Gran method (`phdose::titration::alkalinity::gran`).

Library: Calkulate 23.7.1 (PyPI "calkulate", M. P. Humphreys & R. S. Matthews,
doi:10.5281/zenodo.2634304), pinned in tools/reference/requirements.txt:

    pip install -r tools/reference/requirements.txt
    python3 tools/reference/gran_reference.py

Routines used, both from `calkulate.core`, called the way Calkulate's own file-level
`calkulate.files.solve` calls them:

1. `core.solve_pH_gran` -- what `files.solve(..., solve_mode="pH_gran")` runs when the titration
   data are pH readings. Gran function G = (m_titrant + m_analyte) * 10**-pH, fitted with
   `scipy.stats.linregress` over the points with pH_min <= pH <= pH_max (default 3 to 4);
   the x-intercept is the equivalence titrant mass; alkalinity = intercept * molinity *
   normality / m_analyte, returned in umol/kg. The `totals` and `k_constants` arguments are
   only passed through to its result, so empty dicts are given.
2. `core.gran_alkalinity` -- the Gran first guess that `solve_mode="emf"` starts from. It takes
   EMF in mV; the pH readings are turned into EMF with Calkulate's own Nernst relation
   `convert.pH_to_emf` (slope R*T*ln(10)/F with Calkulate's constants, 59.16 mV per pH at 25 C;
   the EMF0 offset cancels from the intercept). It selects points by the size of G (from the
   first point with G > 0.1 * max G to the end of the data), not by a pH window, so it is
   reported for information: a different, Calkulate-chosen point selection on the same data.

Unit adaptation: Calkulate works in masses (kg) and molinities (mol/kg-solution); here every
volume is turned into a mass with density 1 kg/L and the titrant molarity is used as its
molinity. Because both sample and titrant get the same density, G is exactly proportional to
phdose's F = (V0 + v) * 10**-pH and the intercept in kg is the equivalence volume in L; the
alkalinity in umol/kg is converted back to eq/L with the same density.

pH window: phdose uses every point with pH <= 4.0 (no lower limit); Calkulate's default window is
3 <= pH <= 4. Datasets A and C end above pH 3, so the default window picks the same points as
phdose. Dataset B goes down to pH 2.68, so Calkulate is run twice on it: with its default window
(reported, different points) and with pH_min = 0 (the same points as phdose, the comparison the
Rust test makes).

Datasets (all invented, set at the fictional Brightwater Plating shop). Their pH values are made
here from closed-system carbonate chemistry (ideal activities, 25 C; pK1 = 6.35, pK2 = 10.33,
pKw = 14.00, bisulfate pKa = 1.99, all from memory) by bisection on the charge balance, then
rounded to 0.01 pH as a meter would show them; dataset C also gets a fixed list of reading
jitters. Their "true" alkalinity is the alkalinity put into the invented sample, so the script
also prints how far the Gran result (any implementation) is from the truth -- the Gran method's
own bias from the bicarbonate still present at pH 3.5-4 and, for sulfuric acid, from bisulfate.

Output: a table (all three Calkulate runs), then Rust `const` items to paste into
tests/gran_reference.rs (the phdose-matched window and Calkulate's default window).
"""

import math

import numpy as np
import scipy

import calkulate
from calkulate import convert, core

# Pinned: calkulate==23.7.1 (see requirements.txt); the results below were produced with it.
PINNED_CALKULATE = "23.7.1"

TEMPERATURE_C = 25.0
PK1, PK2, PKW, PKA_HSO4 = 6.35, 10.33, 14.00, 1.99  # 25 C, from memory (data generation only)


def solve_ph(na, ct, cl, st):
    """pH of a closed-system solution: Na+ (mol/L), total carbonate, chloride, total sulfate.

    Charge balance Na + H = Cl + CT*(a1 + 2 a2) + ST*(aHSO4 + 2 aSO4) + Kw/H, ideal activities.
    The excess (cations - anions) rises monotonically with H, so bisect on log10 H.
    """
    k1, k2, kw, ka = 10.0**-PK1, 10.0**-PK2, 10.0**-PKW, 10.0**-PKA_HSO4

    def excess(log_h):
        h = 10.0**log_h
        d = h * h + k1 * h + k1 * k2
        carbonate = ct * (k1 * h + 2.0 * k1 * k2) / d
        sulfate = st * (h + 2.0 * ka) / (h + ka)
        return na + h - cl - carbonate - sulfate - kw / h

    lo, hi = -14.0, 0.0
    for _ in range(200):
        mid = 0.5 * (lo + hi)
        if excess(mid) > 0.0:
            hi = mid
        else:
            lo = mid
    return -0.5 * (lo + hi)


def make_dataset(name, story, v0_ml, acid, molarity, bicarbonate, carbonate, volumes_ml, jitter=None):
    """Simulate a titration of an invented sample; pH rounded to 0.01 (plus optional jitter)."""
    protons = {"HCl": 1, "H2SO4": 2}[acid]
    v0 = v0_ml / 1000.0
    ph = []
    for i, v_ml in enumerate(volumes_ml):
        v = v_ml / 1000.0
        dil = v0 / (v0 + v)
        added = molarity * v / (v0 + v)
        p = solve_ph(
            na=(bicarbonate + 2.0 * carbonate) * dil,
            ct=(bicarbonate + carbonate) * dil,
            cl=added if acid == "HCl" else 0.0,
            st=added if acid == "H2SO4" else 0.0,
        )
        if jitter is not None:
            p += jitter[i]
        ph.append(round(p, 2))
    return {
        "name": name,
        "story": story,
        "v0_ml": v0_ml,
        "acid": acid,
        "molarity": molarity,
        "normality": molarity * protons,
        "protons": protons,
        "volumes_ml": list(volumes_ml),
        "ph": ph,
        "true_eq_per_l": bicarbonate + 2.0 * carbonate,
    }


DATASETS = [
    make_dataset(
        "RINSE_TANK_2",
        "Brightwater Plating, rinse tank 2 after the alkaline cleaner: 100 mL, 0.02 N HCl",
        100.0,
        "HCl",
        0.02,
        bicarbonate=0.0017,
        carbonate=0.00015,
        volumes_ml=[0, 1, 2, 3, 4, 5, 6, 7, 8, 8.5, 9, 9.5, 10, 10.5, 11, 11.5, 12, 13, 14, 15],
    ),
    make_dataset(
        "FINAL_RINSE",
        "Brightwater Plating, softened final-rinse supply: 200 mL, 0.02 N H2SO4 (0.01 M)",
        200.0,
        "H2SO4",
        0.01,
        bicarbonate=0.00035,
        carbonate=0.0,
        volumes_ml=[0, 0.5, 1, 1.5, 2, 2.5, 3, 3.25, 3.5, 3.75, 4, 4.5, 5, 6, 7, 8, 10, 12, 15, 18, 21, 25, 30],
    ),
    make_dataset(
        "COOLING_MAKEUP",
        "Brightwater Plating, cooling-tower make-up, bench titration read off a burette: 50 mL, 0.02 N HCl",
        50.0,
        "HCl",
        0.02,
        bicarbonate=0.0039,
        carbonate=0.00015,
        volumes_ml=[0, 2.0, 4.05, 6.1, 8.0, 9.0, 9.95, 10.5, 10.8, 11.05, 11.3, 11.5, 11.8, 12.1, 12.6, 13.0, 13.55],
        # Invented meter-reading jitter, pH units, one per point.
        jitter=[0.01, -0.01, 0.0, 0.02, -0.01, 0.01, -0.02, 0.01, 0.015, -0.01, 0.0, 0.01, -0.015, 0.005, 0.01, -0.01, 0.0],
    ),
]


def calkulate_ph_gran(ds, ph_min):
    """Calkulate's pH-mode Gran (`core.solve_pH_gran`), volumes as masses at density 1 kg/L."""
    titrant_mass = np.array(ds["volumes_ml"]) / 1000.0  # kg (density 1)
    analyte_mass = ds["v0_ml"] / 1000.0  # kg (density 1)
    ph = np.array(ds["ph"])
    sr = core.solve_pH_gran(
        ds["molarity"],  # mol/kg-solution at density 1
        titrant_mass,
        ph,
        np.full(ph.shape, TEMPERATURE_C),
        analyte_mass,
        {},
        {},
        pH_min=ph_min,
        pH_max=4.0,
        titrant_normality=ds["protons"],
    )
    ve_l = -sr.lr.intercept / sr.lr.slope  # kg of titrant = L at density 1
    return float(ve_l), float(sr.alkalinity) * 1e-6, int(sr.used.sum())


def calkulate_emf_gran(ds):
    """Calkulate's EMF-mode Gran first guess (`core.gran_alkalinity`) on EMF from Calkulate's Nernst."""
    titrant_mass = np.array(ds["volumes_ml"]) / 1000.0
    analyte_mass = ds["v0_ml"] / 1000.0
    temperature = np.full(titrant_mass.shape, TEMPERATURE_C)
    emf = convert.pH_to_emf(np.array(ds["ph"]), 400.0, temperature)  # EMF0 = 400 mV, arbitrary
    ga = core.gran_alkalinity(
        titrant_mass, emf, temperature, analyte_mass, ds["molarity"], titrant_normality=ds["protons"]
    )
    return float(ga.intercept_x), float(ga.alkalinity), int(ga.used.sum())


def main():
    if calkulate.__version__ != PINNED_CALKULATE:
        print(f"WARNING: calkulate {calkulate.__version__} installed, table was made with {PINNED_CALKULATE}")
    lib = f"calkulate {calkulate.__version__} (scipy {scipy.__version__}, numpy {np.__version__})"
    print(f"# Gran reference from {lib}")
    print(f"# {'dataset':<15} {'routine':<32} {'points':>6} {'v_e / L':>22} {'alk / eq/L':>22} {'vs truth':>9}")
    rows = {}
    for ds in DATASETS:
        truth = ds["true_eq_per_l"]
        runs = [
            ("solve_pH_gran pH 0..4 (=phdose)", calkulate_ph_gran(ds, 0.0)),
            ("solve_pH_gran pH 3..4 (default)", calkulate_ph_gran(ds, 3.0)),
            ("gran_alkalinity (EMF mode)", calkulate_emf_gran(ds)),
        ]
        rows[ds["name"]] = runs
        for label, (ve, alk, n) in runs:
            dev = 100.0 * (alk - truth) / truth
            print(f"  {ds['name']:<15} {label:<32} {n:>6} {ve!r:>22} {alk!r:>22} {dev:>+8.3f}%")
        print(f"  {ds['name']:<15} {'truth (invented sample)':<32} {'':>6} "
              f"{truth * ds['v0_ml'] / 1000.0 / ds['normality']!r:>22} {truth!r:>22}")

    print()
    print("// ---- Rust, produced by `python3 tools/reference/gran_reference.py` ----")
    print(f"// {lib}")
    for ds in DATASETS:
        (_, (ve, alk, n)), (_, (ve3, _, n3)), _ = rows[ds["name"]]
        print(f"/// {ds['story']}.")
        print(f"const {ds['name']}: Dataset = Dataset {{")
        print(f"    sample_l: {ds['v0_ml'] / 1000.0!r},")
        print(f"    normality: {ds['normality']!r},")
        print("    // (titrant mL, pH)")
        pts = ", ".join(f"({v!r}, {p!r})" for v, p in zip(map(float, ds["volumes_ml"]), ds["ph"]))
        print(f"    points: &[{pts}],")
        print(f"    true_eq_per_l: {ds['true_eq_per_l']!r},")
        print(f"    calk_points: {n},")
        print(f"    calk_equivalence_l: {ve!r},")
        print(f"    calk_eq_per_l: {alk!r},")
        print(f"    calk_default_points: {n3},")
        print(f"    calk_default_equivalence_l: {ve3!r},")
        print("};")
    assert all(math.isfinite(r[1][1]) for runs in rows.values() for r in runs)


if __name__ == "__main__":
    main()
