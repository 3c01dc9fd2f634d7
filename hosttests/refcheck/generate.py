#!/usr/bin/env python3
"""Generate the committed check tables that hosttests/tests/refcheck.rs compares the crate with.

Manual step, never run by CI (see DEVELOPERS.md, "Outside checks"):

    python3 -m venv .venv
    .venv/bin/pip install -r hosttests/refcheck/requirements.txt
    .venv/bin/python hosttests/refcheck/generate.py

Every output file names the library and the version that produced it. Outputs (in this
directory):

- constants.json      CODATA / SI 2019 constants from scipy.constants
- astm_g173_uv.csv    ASTM G173-03 global tilt spectrum, 280-400 nm, from pvlib
- astm_g173_uv.json   pvlib.spectrum.average_photon_energy of that part, and its integrals
- blue_light_b.csv    luxpy's IEC 62471 blue-light hazard function B(lambda)
"""

import csv
import json
import os
import sys

import numpy as np

HERE = os.path.dirname(os.path.abspath(__file__))


def write_json(name, data):
    with open(os.path.join(HERE, name), "w") as f:
        json.dump(data, f, indent=2, sort_keys=True)
        f.write("\n")


def write_csv(name, header_comment, columns, rows):
    with open(os.path.join(HERE, name), "w", newline="") as f:
        f.write("# " + header_comment + "\n")
        w = csv.writer(f, lineterminator="\n")
        w.writerow(columns)
        for r in rows:
            w.writerow([repr(float(x)) for x in r])


def constants():
    import scipy
    import scipy.constants as k

    write_json(
        "constants.json",
        {
            "generator": "scipy.constants",
            "library": "scipy",
            "version": scipy.__version__,
            "note": "CODATA recommended values as shipped in scipy.constants (h, c, e, N_A are exact since SI 2019)",
            "planck_j_s": k.h,
            "speed_of_light_m_per_s": k.c,
            "elementary_charge_c": k.e,
            "avogadro_per_mol": k.N_A,
            "hc_over_e_ev_nm": k.h * k.c / k.e * 1e9,
        },
    )


def astm_g173():
    import pvlib
    from pvlib import spectrum

    ref = spectrum.get_reference_spectra(standard="ASTM G173-03")
    g = ref["global"]
    uv = g[(g.index >= 280.0) & (g.index <= 400.0)]
    wl = np.asarray(uv.index, dtype=float)
    e = np.asarray(uv.values, dtype=float)
    write_csv(
        "astm_g173_uv.csv",
        "ASTM G173-03 global tilt, W m-2 nm-1, 280-400 nm; pvlib %s "
        "pvlib.spectrum.get_reference_spectra" % pvlib.__version__,
        ["wavelength_nm", "global_w_per_m2_nm"],
        zip(wl, e),
    )
    ape = spectrum.average_photon_energy(uv)
    write_json(
        "astm_g173_uv.json",
        {
            "generator": "pvlib.spectrum.average_photon_energy on the 280-400 nm part of "
            "get_reference_spectra('ASTM G173-03')['global']",
            "library": "pvlib",
            "version": pvlib.__version__,
            "numpy_version": np.__version__,
            "average_photon_energy_ev": float(ape),
            "points": int(len(wl)),
        },
    )


def blue_light():
    import luxpy
    from luxpy.toolboxes import photbiochem as ph

    blh = np.asarray(ph._BLH, dtype=float)
    wl, b = blh[0], blh[1]
    keep = (wl >= 300.0) & (wl <= 700.0)
    write_csv(
        "blue_light_b.csv",
        "IEC 62471 blue-light hazard function B(lambda); luxpy %s "
        "luxpy.toolboxes.photbiochem._BLH" % luxpy.__version__,
        ["wavelength_nm", "b"],
        zip(wl[keep], b[keep]),
    )


def main():
    done = []
    for name, f in [("constants", constants), ("astm_g173", astm_g173), ("blue_light", blue_light)]:
        try:
            f()
            done.append(name)
        except Exception as e:  # report and continue: each table is independent
            print("%s: FAILED: %r" % (name, e), file=sys.stderr)
    print("generated:", ", ".join(done))


if __name__ == "__main__":
    main()
