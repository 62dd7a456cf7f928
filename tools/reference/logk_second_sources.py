#!/usr/bin/env python3
"""Second sources for catalogue pK(T) functions, as tables for tests/reference.rs.

Every number printed here is read from, or computed by, a package from PyPI, pinned in
tools/reference/requirements-logk.txt (Python 3.11.7):

    python3 -m venv /tmp/logk-venv
    /tmp/logk-venv/bin/pip install -r tools/reference/requirements-logk.txt
    /tmp/logk-venv/bin/python tools/reference/logk_second_sources.py

1. pychnosz 1.5.3 (a Python port of CHNOSZ; its OBIGT database): standard-state properties of
   oxalic acid, H-oxalate, oxalate-2, acetic acid, acetate, formic acid and formate from Shock (1995),
   Am. J. Sci. 295, 496 ("Sho95" in OBIGT's refs.csv), in the revised HKF equations of state, evaluated by the
   package's `subcrt` at 1 bar. The OBIGT rows are printed as they stand in
   pychnosz/data/extdata/OBIGT/organic_aq.csv. CHNOSZ cannot evaluate water at 0 degC exactly
   and moves 0 degC to 0.01 degC; the difference in pK is below 1e-4.
2. ionize 1.5.3: its ion database (ionize/Database/ion_data.json) carries a pKa at 25 degC, an
   ionization enthalpy (J/mol) and a heat-capacity change (J/(K mol)) per step. The entries are
   printed as they stand (read as JSON; ionize itself is not imported) and evaluated here with the
   constant-heat-capacity form, the one tests/reference.rs writes out as `goldberg`. (ionize's own
   `Ion.pKa(temperature=...)` was tried and gives pK values that move by about 0.4 per 5 K for
   oxalic acid, which no entry's enthalpy implies; it is not used.) The database names no source
   per entry; its acetic, citric and boric acid and ammonium entries are the selected values of
   Goldberg, Kishore & Lennen (2002), J. Phys. Chem. Ref. Data 31, 231, digit for digit.
3. phreeqc 1.1.1 (Python bindings for IPHREEQC; ships the PHREEQC databases): the reaction
   blocks are printed with their line numbers; `-analytic` functions and van 't Hoff lines are
   evaluated here with PHREEQC's documented forms:
   log K = A1 + A2 T + A3/T + A4 log10 T + A5/T^2 (+ A6 T^2), and
   log K(T) = log K(25) - delta_h/(R ln 10) (1/T - 1/298.15).

The script only reads and evaluates; nothing is fitted.
"""

import importlib.util
import json
import math
import os

import pychnosz

R = 8.314462618  # J/(K mol), CODATA 2018
CELSIUS = [0.0, 5.0, 10.0, 15.0, 20.0, 25.0, 30.0, 35.0, 40.0, 45.0, 50.0, 55.0, 60.0]

PINNED = {"pychnosz": "1.5.3", "ionize": "1.5.3", "phreeqc": "1.1.1"}


def package_dir(name):
    """The installed package's folder, found without importing it."""
    spec = importlib.util.find_spec(name)
    return list(spec.submodule_search_locations)[0]


def version(name):
    from importlib.metadata import version as v

    return v(name)


def print_lines(path, wanted, after=0):
    """Prints the lines of `path` that start with one of `wanted`, with line numbers and the
    `after` lines that follow each."""
    with open(path, encoding="utf-8", errors="replace") as f:
        lines = f.readlines()
    rel = os.path.relpath(path, os.path.dirname(package_dir("pychnosz")))
    for i, line in enumerate(lines):
        if any(line.startswith(w) for w in wanted):
            for j in range(i, min(i + 1 + after, len(lines))):
                print(f"  {rel}:{j + 1}: {lines[j].rstrip()}")


def rust_table(name, source, values):
    print(f"/// {source}")
    print(f"const {name}: [(f64, f64); {len(values)}] = [")
    for t, pk in values:
        print(f"    ({t:.1f}, {pk:.4f}),")
    print("];")


# ---------------------------------------------------------------------------------------------
# 1. Shock (1995) via pychnosz / OBIGT
# ---------------------------------------------------------------------------------------------


def obigt_pk(acid, base):
    """pK of acid = base + H+ at CELSIUS, 1 bar."""
    temps = [max(t, 0.01) for t in CELSIUS]
    r = pychnosz.subcrt([acid, base, "H+"], [-1, 1, 1], T=temps, P=1, messages=False, show=False)
    return [(t, -lk) for t, lk in zip(CELSIUS, r.out["logK"])]


def section_obigt():
    print("=" * 100)
    print(f"1. pychnosz {version('pychnosz')} (OBIGT, Shock 1995 HKF parameters)")
    base = package_dir("pychnosz")
    print_lines(os.path.join(base, "data", "extdata", "thermo", "refs.csv"), ["Sho95,"])
    print_lines(
        os.path.join(base, "data", "extdata", "OBIGT", "organic_aq.csv"),
        ['"oxalic acid",', "H-oxalate,", "oxalate-2,", '"acetic acid",', "acetate,", '"formic acid",',
         "formate,"],
    )
    tables = {}
    for key, acid, b in [
        ("OBIGT_OXALATE_K1", "oxalic acid", "H-oxalate"),
        ("OBIGT_OXALATE_K2", "H-oxalate", "oxalate-2"),
        ("OBIGT_ACETATE", "acetic acid", "acetate"),
        ("OBIGT_FORMATE", "formic acid", "formate"),
    ]:
        tables[key] = obigt_pk(acid, b)
    print()
    for key, label in [
        ("OBIGT_OXALATE_K1", "oxalic acid = H-oxalate + H+"),
        ("OBIGT_OXALATE_K2", "H-oxalate = oxalate-2 + H+"),
        ("OBIGT_ACETATE", "acetic acid = acetate + H+"),
        ("OBIGT_FORMATE", "formic acid = formate + H+"),
    ]:
        rust_table(
            key,
            f"pK of {label}: Shock (1995) via pychnosz {version('pychnosz')} `subcrt`, 1 bar "
            "(tools/reference/logk_second_sources.py).",
            tables[key],
        )
    return tables


def constant_cp_pk(pk_25, dh_kj, dcp, kelvin):
    """The integrated van 't Hoff equation with a constant heat-capacity change."""
    theta = 298.15
    return pk_25 + ((dh_kj * 1000.0 - dcp * theta) * (1.0 / kelvin - 1.0 / theta)
                    - dcp * math.log(kelvin / theta)) / (R * math.log(10.0))


# ---------------------------------------------------------------------------------------------
# 2. ionize
# ---------------------------------------------------------------------------------------------


def section_ionize():
    print("=" * 100)
    print(f"2. ionize {version('ionize')} (ionize/Database/ion_data.json)")
    path = os.path.join(package_dir("ionize"), "Database", "ion_data.json")
    with open(path, encoding="utf-8") as f:
        data = json.load(f)
    names = ["oxalic acid", "acetic acid", "phosphoric acid", "citric acid", "boric acid", "ammonium",
             "phthalic acid", "formic acid"]
    for name in names:
        e = data[name]
        print(f"  {name}: reference_pKa {e['reference_pKa']}, enthalpy {e['enthalpy']} J/mol, "
              f"heat_capacity {e['heat_capacity']} J/(K mol), valence {e['valence']}")
    for name in ["oxalic acid", "acetic acid"]:
        e = data[name]
        print(f"  {name}, constant-heat-capacity pK (steps in the database's order, most negative "
              "valence first):")
        for t in CELSIUS:
            pks = [constant_cp_pk(pk, h / 1000.0, cp, t + 273.15)
                   for pk, h, cp in zip(e["reference_pKa"], e["enthalpy"], e["heat_capacity"])]
            print(f"    {t:4.0f} degC: " + "  ".join(f"{p:.4f}" for p in pks))


# ---------------------------------------------------------------------------------------------
# 3. PHREEQC databases shipped by the phreeqc package
# ---------------------------------------------------------------------------------------------


def analytic(coef, kelvin):
    a = list(coef) + [0.0] * (6 - len(coef))
    return a[0] + a[1] * kelvin + a[2] / kelvin + a[3] * math.log10(kelvin) + a[4] / kelvin**2 \
        + a[5] * kelvin**2


def vant_hoff(log_k25, delta_h_kj, kelvin):
    return log_k25 - delta_h_kj * 1000.0 / (R * math.log(10.0)) * (1.0 / kelvin - 1.0 / 298.15)


def section_phreeqc():
    print("=" * 100)
    print(f"3. phreeqc {version('phreeqc')} (phreeqc/databases)")
    db = os.path.join(package_dir("phreeqc"), "databases")
    thermoddem = os.path.join(db, "PHREEQC_ThermoddemV1.10_15Dec2020.dat")
    minteq4 = os.path.join(db, "minteq.v4.dat")
    llnl = os.path.join(db, "llnl.dat")
    print_lines(thermoddem, ["1.000H2PO4- + 1.000H+  = H3PO4"], after=4)
    print_lines(minteq4, ["H+ + PO4-3 = HPO4-2", "2 H+ + PO4-3 = H2PO4-", "3 H+ + PO4-3 = H3PO4",
                          "H+ + Acetate- = H(Acetate)"], after=7)
    print_lines(llnl, ["HAcetate = Acetate- + H+"], after=9)

    # H3PO4 = H2PO4- + H+ from Thermoddem: pK1 = log K of the association.
    thermoddem_k1 = (7.1025502e2, 1.1203519e-1, -3.9337065e4, -2.5690201e2, 2.3206641e6)
    # From minteq.v4.dat (NIST46.3): H3PO4 = H2PO4- + H+ is the difference of the cumulative
    # formation constants: log K 21.721 - 19.573, delta_h -10.1 - (-18) kJ.
    k1_minteq = (21.721 - 19.573, -10.1 - (-18.0))
    # H(Acetate) from minteq.v4.dat (NIST46.4): association log K 4.757, delta_h 0.41 kJ.
    ac_minteq = (4.757, 0.41)
    llnl_acetate = (-0.96597e2, -0.34535e-1, 0.19753e4, 0.38593e2, 0.3085e2)
    rows = []
    for t in CELSIUS:
        k = t + 273.15
        rows.append((t, analytic(thermoddem_k1, k), vant_hoff(*k1_minteq, k),
                     vant_hoff(*ac_minteq, k), -analytic(llnl_acetate, k)))
    print("  degC  pK1 H3PO4 Thermoddem  pK1 H3PO4 minteq.v4  pK acetic minteq.v4  pK acetic llnl.dat")
    for t, a, b, c, d in rows:
        print(f"  {t:4.0f}  {a:18.4f}  {b:18.4f}  {c:18.4f}  {d:18.4f}")
    print(f"  minteq.v4.dat pK1 of H3PO4 at 25 degC: {k1_minteq[0]:.3f}, "
          f"dissociation enthalpy {-k1_minteq[1]:.1f} kJ/mol")


def main():
    for name, pinned in PINNED.items():
        got = version(name)
        flag = "" if got == pinned else f"  <-- NOT the pinned {pinned}: numbers may differ"
        print(f"{name} {got}{flag}")
    section_obigt()
    section_ionize()
    section_phreeqc()


if __name__ == "__main__":
    main()
