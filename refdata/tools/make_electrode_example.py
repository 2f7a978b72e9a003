"""Generate the INVENTED electrode readings in refdata/examples/electrode-larkspur-fen/.

Nothing here is a measurement. The Larkspur Fen water laboratory, its nitrate method, its
notebook and its buffer certificates are a scenario of our own. Run by a developer (a second run
writes the same files):

    python refdata/tools/make_electrode_example.py refdata/examples/electrode-larkspur-fen

Nitrate electrode (stated parameters, all INVENTED): potentials from the Nikolsky-Eisenman
equation (Umezawa et al., Pure Appl. Chem. 72, 1851 (2000))

    E = E0 + S log10(a(NO3-) + K a(Cl-) + A0)

with S = SLOPE_PERCENT % of the Nernst slope R T ln10 / (z F) (CODATA constants through
scipy.constants, z = -1), E0, K and A0 below, plus N(0, NOISE_V) noise (numpy default_rng(SEED)).
Activities: molality times the Davies activity coefficient (Davies, Ion Association, 1962),
log10 gamma = -A z^2 (sqrt(I)/(1 + sqrt(I)) - 0.3 I), A from saltbench's IAPWS-based
Debye-Hückel constant at the temperature, I of the whole solution (the Na2SO4 adjuster
included), so `saltbench electrode calibrate --convention davies` should recover the stated
parameters within their standard errors.

pH electrode: E = PH_E0 - PH_SLOPE_PERCENT % x (R T ln10 / F) pH, plus N(0, PH_NOISE_V), at
invented buffer values of invented certificates (not a buffer table of any standard).
"""

from __future__ import annotations

import math
import sys
from pathlib import Path

import numpy as np
from scipy import constants as c

from saltbench.water import debye_huckel_constants

T = 298.15
SEED = 2026
# nitrate electrode, INVENTED
E0 = 0.1850  # V
SLOPE_PERCENT = 97.0
K_CL = 4.0e-3
A0 = 2.0e-6
NOISE_V = 0.3e-3
ADJUSTER = 0.04  # mol/kg Na2SO4 in every solution
STANDARDS = (1e-6, 3e-6, 1e-5, 3e-5, 1e-4, 3e-4, 1e-3, 3e-3, 1e-2, 3e-2)  # NaNO3, mol/kg
FIXED_CL = 0.02  # mol/kg NaCl, the fixed-interference series
FIXED_SERIES = (3e-6, 1e-5, 3e-5, 1e-4, 1e-3, 1e-2)
SEPARATE = (0.01, 0.1)  # NaCl alone, mol/kg
SAMPLES = (("inlet ditch", 2.1e-4, 0.003), ("well 4", 4.5e-5, 0.0008), ("fen pool", 6.0e-6, 0.012))
# pH electrode, INVENTED (so are the certificates' values)
PH_E0 = 0.4080
PH_SLOPE_PERCENT = 98.6
PH_NOISE_V = 0.15e-3
BUFFERS = (("buffer A: certificate LF-A-17 (invented)", 4.12, 0.01),
           ("buffer B: certificate LF-B-17 (invented)", 7.03, 0.01),
           ("buffer C: certificate LF-C-17 (invented)", 9.87, 0.02))
PH_SAMPLES = (("inlet ditch", 6.42), ("fen pool", 5.18))


def nernst() -> float:
    return c.R * T * math.log(10.0) / c.physical_constants["Faraday constant"][0]


def log_gamma(z: int, ionic_strength: float) -> float:
    a = debye_huckel_constants(T).a_gamma_log10
    s = math.sqrt(ionic_strength)
    return -a * z * z * (s / (1.0 + s) - 0.3 * ionic_strength)


def nitrate_emf(m_no3: float, m_cl: float, rng: np.random.Generator) -> float:
    i = 3 * ADJUSTER + m_no3 + m_cl  # Na2SO4 + NaNO3 + NaCl
    g = 10.0 ** log_gamma(1, i)
    s = -SLOPE_PERCENT / 100.0 * nernst()
    return E0 + s * math.log10(m_no3 * g + K_CL * m_cl * g + A0) + float(rng.normal(0.0, NOISE_V))


def nitrate_text() -> str:
    rng = np.random.default_rng(SEED)
    rows = []
    for m in STANDARDS:
        rows.append(f"standard,,NaNO3={m:g},{1000 * nitrate_emf(m, 0.0, rng):.2f}")
    for m in FIXED_SERIES:
        rows.append(f"standard,fixed Cl-,NaNO3={m:g};NaCl={FIXED_CL:g},{1000 * nitrate_emf(m, FIXED_CL, rng):.2f}")
    for m in SEPARATE:
        rows.append(f"separate,Cl- alone,NaCl={m:g},{1000 * nitrate_emf(0.0, m, rng):.2f}")
    for label, m, cl in SAMPLES:
        rows.append(f"sample,{label},NaCl={cl:g},{1000 * nitrate_emf(m, cl, rng):.2f}")
    return ("# saltbench readings 1\n"
            "# kind: electrode\n"
            "# id: larkspur-nitrate-2026-03\n"
            "# ion: NO3-\n"
            "# interferents: Cl-\n"
            f"# background: Na2SO4={ADJUSTER:g}\n"
            "# temperature: 25 C\n"
            "# u_temperature: 0.2 K\n"
            "# electrode: nitrate ion-selective electrode, PVC membrane (invented)\n"
            "# reference_electrode: Ag/AgCl, double junction, outer fill 0.1 mol/L Na2SO4 (invented)\n"
            f"# u_emf: {NOISE_V * 1000:g} mV\n"
            "# source: larkspur-notebook-3\n"
            "# typed: invented for the saltbench walk-through by refdata/tools/make_electrode_example.py; "
            "not a measurement\n"
            "# note: INVENTED. Generated from stated parameters plus noise; see the script.\n"
            "role,label,solution,emf_mv\n" + "\n".join(rows) + "\n")


def ph_text() -> str:
    rng = np.random.default_rng(SEED + 1)
    s = PH_SLOPE_PERCENT / 100.0 * nernst()
    rows = [f"buffer,{label},{ph:g},{u:g},{1000 * (PH_E0 - s * ph + rng.normal(0.0, PH_NOISE_V)):.2f}"
            for label, ph, u in BUFFERS]
    rows += [f"sample,{label},,,{1000 * (PH_E0 - s * ph + rng.normal(0.0, PH_NOISE_V)):.2f}"
             for label, ph in PH_SAMPLES]
    return ("# saltbench readings 1\n"
            "# kind: ph_buffers\n"
            "# id: larkspur-ph-2026-03\n"
            "# temperature: 25 C\n"
            "# u_temperature: 0.2 K\n"
            "# electrode: combination glass electrode (invented)\n"
            "# reference_electrode: Ag/AgCl in 3 mol/L KCl, built into the combination electrode (invented)\n"
            f"# u_emf: {PH_NOISE_V * 1000:g} mV\n"
            "# source: larkspur-notebook-3\n"
            "# typed: invented for the saltbench walk-through by refdata/tools/make_electrode_example.py; "
            "the buffer values are those of invented certificates\n"
            "# note: INVENTED. Generated from stated parameters plus noise; see the script.\n"
            "role,label,ph,u_ph,emf_mv\n" + "\n".join(rows) + "\n")


SOURCES = """# INVENTED bibliography entry for the saltbench example scenario (the Larkspur Fen water
# laboratory). It cites no real publication; it stands for the notebook page a lab would cite.

[larkspur-notebook-3]
authors: Larkspur Fen water laboratory (invented)
title: Method notebook 3: nitrate electrode and pH calibrations (invented example)
publisher: saltbench example scenario (invented; not a real publication)
year: 2026
note: INVENTED. Not a real source; readings generated by refdata/tools/make_electrode_example.py, not measured.
"""


def main(folder: str) -> None:
    out = Path(folder)
    out.mkdir(parents=True, exist_ok=True)
    (out / "larkspur-nitrate.csv").write_text(nitrate_text(), encoding="utf-8")
    (out / "larkspur-ph.csv").write_text(ph_text(), encoding="utf-8")
    (out / "larkspur-fen.sources.txt").write_text(SOURCES, encoding="utf-8")


if __name__ == "__main__":
    main(sys.argv[1] if len(sys.argv) > 1 else "refdata/examples/electrode-larkspur-fen")
