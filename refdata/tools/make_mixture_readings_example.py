"""Generate the INVENTED mixture-cell readings in refdata/examples/readings-kestrel-bay/.

Nothing here is a measurement. The Kestrel Bay pilot plant (refdata/examples/README.md) is a
scenario of our own; its "notebook 13" does not exist. Run by a developer (a second run writes
the same file):

    python refdata/tools/make_mixture_readings_example.py refdata/examples/readings-kestrel-bay

The cell Pt | H2 | HCl(m1), NaCl(m2) | AgCl | Ag at 25 °C (Harned and Owen, The Physical Chemistry
of Electrolytic Solutions, 3rd ed., 1958, ch. 14):

    E = E° - (R T / F) ln(m1 (m1 + m2) gamma±^2)

with R and F from CODATA 2018 (scipy.constants), E° = 0.22234 V (from memory of Bates and Bower,
J. Res. NBS 53, 283 (1954)), and gamma±(HCl):
- HCl alone (m2 = 0) at 0.001-0.1 mol/kg: the bundled HCl column typed from memory of the CRC
  Handbook table (refdata/datasets/HCl.gamma_pm.crc-handbook.csv), for the E° extrapolation;
- in the mixture at constant I = m1 + m2 = 1 mol/kg, by Harned's rule
  log10 gamma±(HCl) = log10 gamma±°(HCl, 1 mol/kg) - ALPHA m2, gamma±° = 0.811 from the same
  column and ALPHA an INVENTED coefficient.
Noise: N(0, NOISE_V) added to each EMF, numpy default_rng(SEED).
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
from scipy import constants as c

E0 = 0.22234  # V, from memory of Bates and Bower (1954)
T = 298.15
ALPHA = 0.031  # kg/mol, INVENTED
NOISE_V = 2e-5
SEED = 2026
# gamma±(HCl) alone, from memory of the CRC Handbook (as bundled)
PURE_M = (0.001, 0.002, 0.005, 0.010, 0.020, 0.050, 0.100)
PURE_GAMMA = (0.965, 0.952, 0.929, 0.905, 0.876, 0.832, 0.797)
GAMMA_AT_1 = 0.811
MIX_NACL = (0.1, 0.2, 0.3, 0.4, 0.5, 0.6, 0.7, 0.8, 0.9)
NAME = "readings-hcl-nacl-emf.csv"


def emf(m1: np.ndarray, m2: np.ndarray, gamma: np.ndarray) -> np.ndarray:
    f = c.physical_constants["Faraday constant"][0]
    return E0 - c.R * T / f * np.log(m1 * (m1 + m2) * gamma**2)


def table() -> list[tuple[float, float, float]]:
    m2_mix = np.array(MIX_NACL)
    m1 = np.r_[np.array(PURE_M), 1.0 - m2_mix]
    m2 = np.r_[np.zeros(len(PURE_M)), m2_mix]
    gamma = np.r_[np.array(PURE_GAMMA), GAMMA_AT_1 * 10.0 ** (-ALPHA * m2_mix)]
    e = emf(m1, m2, gamma) + np.random.default_rng(SEED).normal(0.0, NOISE_V, m1.size)
    return [(round(float(a), 4), round(float(b), 4), round(float(x) * 1000, 3)) for a, b, x in zip(m1, m2, e)]


def text() -> str:
    rows = "".join(f"{a:g},{b:g},{x:.3f}\n" for a, b, x in table())
    return (
        "# saltbench readings 1\n"
        "# kind: emf\n"
        "# electrolyte: HCl\n"
        "# background: NaCl\n"
        "# temperature: 25 C\n"
        "# source: kestrel-notebook-13\n"
        "# typed: measured in the invented Kestrel Bay pilot-plant scenario (INVENTED DATA for the "
        "saltbench example; not a real measurement)\n"
        "# cell: Pt | H2 | HCl(m1), NaCl(m2) | AgCl | Ag\n"
        "# e_standard: extrapolate\n"
        "# u_emf: 0.02 mV\n"
        "# note: INVENTED readings made by refdata/tools/make_mixture_readings_example.py: "
        f"E = E° - (RT/F) ln(m1 (m1 + m2) gamma±^2), E° = {E0} V (from memory of Bates and Bower "
        "1954), CODATA R and F, 298.15 K; gamma± of HCl alone from the bundled HCl column (from memory "
        "of the CRC Handbook), in the mixture at I = 1 mol/kg by Harned's rule with gamma±° 0.811 and "
        f"an invented coefficient {ALPHA} kg/mol; normal noise of {NOISE_V * 1000:g} mV "
        f"(numpy default_rng({SEED})); for trying the commands only, never for calibration or "
        "regulated use\n"
        "molality,background_molality,emf_mv\n" + rows)


def main(argv: list[str]) -> int:
    if len(argv) != 2:
        print(f"usage: {argv[0]} FOLDER", file=sys.stderr)
        return 2
    folder = Path(argv[1])
    folder.mkdir(parents=True, exist_ok=True)
    (folder / NAME).write_text(text(), encoding="utf-8")
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv))
