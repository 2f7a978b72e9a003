"""Generate the INVENTED thermostatted-cell readings in refdata/examples/readings-kestrel-bay-thermostat/.

Nothing here is a measurement. The Kestrel Bay pilot plant (refdata/examples/README.md) is a
scenario of our own; its "notebook 14" does not exist. Run by a developer (a second run writes
the same files):

    python refdata/tools/make_thermostat_readings_example.py refdata/examples/readings-kestrel-bay-thermostat

The Harned cell Pt | H2 | HCl(m) | AgCl | Ag at 15, 25 and 40 °C (Harned and Owen, The Physical
Chemistry of Electrolytic Solutions, 3rd ed., 1958, ch. 11):

    E = E°(T) - (2 R T / F) ln(m gamma±)

with R and F from CODATA 2018 (scipy.constants) and the stated parameters below:
- E°(T) = E0_25 + E0_T1 (T - 298.15 K) + E0_T2 (T - 298.15 K)^2; E0_25 = 0.22234 V (from memory
  of Bates and Bower, J. Res. NBS 53, 283 (1954)); E0_T1 and E0_T2 are INVENTED (of the sign and
  order of a silver-silver chloride electrode's, not its published values);
- ln gamma± = -A_gamma(T) sqrt(m) / (1 + B(T) ION_SIZE sqrt(m)) + b(T) m, b(T) = B_25 + B_T (T -
  298.15 K), A_gamma and B of water at T (IAPWS, through saltbench.water); ION_SIZE, B_25 and B_T
  are INVENTED.
Noise: N(0, NOISE_V) added to each EMF, numpy default_rng(SEED), rows in the generator's order.
"""

from __future__ import annotations

import sys
from pathlib import Path

import numpy as np
from scipy import constants as c

from saltbench.water.debye_huckel import debye_huckel_constants

E0_25 = 0.22234  # V, from memory of Bates and Bower (1954)
E0_T1 = -6.4e-4  # V/K, INVENTED
E0_T2 = -3.2e-6  # V/K^2, INVENTED
ION_SIZE = 4.3  # Å, INVENTED
B_25 = 0.27  # kg/mol, INVENTED (of the size that puts gamma± near HCl's own, 0.81 at 1 mol/kg)
B_T = -4e-4  # kg/(mol K), INVENTED
TEMPERATURES_C = (15.0, 25.0, 40.0)
MOLALITIES = (0.001, 0.002, 0.003, 0.005, 0.007, 0.01, 0.02, 0.03, 0.05, 0.07, 0.1, 0.2, 0.5, 1.0)
NOISE_V = 2e-5
SEED = 2027
NAME = "readings-hcl-thermostat-emf.csv"
BIB_NAME = "kestrel-bay-thermostat.sources.txt"


def e_standard(t: float) -> float:
    d = t - 298.15
    return E0_25 + E0_T1 * d + E0_T2 * d * d


def ln_gamma(m: np.ndarray, t: float) -> np.ndarray:
    dh = debye_huckel_constants(t)
    s = np.sqrt(m)
    return -dh.a_gamma * s / (1 + dh.b_gamma_per_angstrom * ION_SIZE * s) + (B_25 + B_T * (t - 298.15)) * m


def emf(m: np.ndarray, t: float) -> np.ndarray:
    f = c.physical_constants["Faraday constant"][0]
    return e_standard(t) - 2 * c.R * t / f * np.log(m * np.exp(ln_gamma(m, t)))


def table() -> list[tuple[float, float, float]]:
    rng = np.random.default_rng(SEED)
    m = np.array(MOLALITIES)
    rows = []
    for tc in TEMPERATURES_C:
        e = emf(m, tc + 273.15) + rng.normal(0.0, NOISE_V, m.size)
        rows += [(float(a), tc, round(float(x) * 1000, 3)) for a, x in zip(m, e)]
    return rows


def text() -> str:
    rows = "".join(f"{a:g},{tc:g} C,{x:.3f}\n" for a, tc, x in table())
    return (
        "# saltbench readings 1\n"
        "# kind: emf\n"
        "# id: kestrel-hcl-thermostat\n"
        "# electrolyte: HCl\n"
        "# temperature: 25 C\n"
        "# source: kestrel-notebook-14\n"
        "# typed: measured in the invented Kestrel Bay pilot-plant scenario (INVENTED DATA for the "
        "saltbench example; not a real measurement)\n"
        "# cell: Pt | H2 | HCl(m) | AgCl | Ag\n"
        "# e_standard: extrapolate\n"
        "# u_emf: 0.02 mV\n"
        "# note: INVENTED readings made by refdata/tools/make_thermostat_readings_example.py: "
        f"E = E°(T) - (2RT/F) ln(m gamma±), CODATA R and F; E°(T) = {E0_25} V (from memory of Bates "
        f"and Bower 1954) {E0_T1:+g} V/K (T - 298.15 K) {E0_T2:+g} V/K2 (T - 298.15 K)^2 (temperature "
        f"coefficients invented); ln gamma± extended Debye-Hückel with water's A and B at T, an invented "
        f"ion size {ION_SIZE} Å and b(T) = {B_25} {B_T:+g} (T - 298.15 K) kg/mol (invented); normal "
        f"noise of {NOISE_V * 1000:g} mV (numpy default_rng({SEED})); for trying the commands only, "
        "never for calibration or regulated use\n"
        "molality,temperature,emf_mv\n" + rows)


BIB = """# INVENTED bibliography entry for the saltbench example scenario (the Kestrel Bay pilot plant).
# It cites no real publication; it stands for the lab-notebook page an operator would cite.

[kestrel-notebook-14]
authors: Kestrel Bay pilot plant (invented)
title: Laboratory notebook 14: thermostatted HCl cell at 15, 25 and 40 °C (invented example)
publisher: saltbench example scenario (invented; not a real publication)
year: 2026
note: INVENTED, not a real source: readings made by refdata/tools/make_thermostat_readings_example.py
"""

README = """INVENTED EXAMPLE READINGS — not real measurements.

EMF readings of the Harned cell Pt | H2 | HCl(m) | AgCl | Ag thermostatted at 15, 25 and 40 °C in
the Kestrel Bay pilot plant, the invented scenario of `../README.md`, in saltbench's raw-readings
format with a `temperature` column (DEVELOPERS.md, "Data at several temperatures"). Nothing here
was measured: the file was generated by `refdata/tools/make_thermostat_readings_example.py` (run it
again and it writes the same files) from the Nernst equation with a stated E°(T) (0.22234 V at
25 °C from memory of Bates and Bower 1954; invented temperature coefficients), an extended
Debye-Hückel gamma± with invented parameters, and Gaussian noise of a fixed seed; the file's
`note` gives the recipe. Never loaded into the bundled store. Do not use it for any real purpose.
Try it with:

    saltbench readings add refdata/examples/readings-kestrel-bay-thermostat
    saltbench readings reduce kestrel-hcl-thermostat
    saltbench data show HCl     # the reduced dataset kestrel-hcl-thermostat.gamma_pm, by temperature
"""


def main(argv: list[str]) -> int:
    if len(argv) != 2:
        print(f"usage: {argv[0]} FOLDER", file=sys.stderr)
        return 2
    folder = Path(argv[1])
    folder.mkdir(parents=True, exist_ok=True)
    (folder / NAME).write_text(text(), encoding="utf-8")
    (folder / BIB_NAME).write_text(BIB, encoding="utf-8")
    (folder / "README.md").write_text(README, encoding="utf-8")
    return 0


if __name__ == "__main__":
    raise SystemExit(main(sys.argv))
