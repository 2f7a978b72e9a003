"""Synthetic data at several temperatures for the tests of fitting across temperatures.

Invented scenario: the invented Saltmarsh Pilot Plant laboratory measures the invented salt QxCl
(invented cation Qx, charge +1) in thermostatted cells at 5 to 55 °C. Every value here is
generated from the stated temperature coefficients below plus Gaussian noise of stated size;
none is a property of a real substance.
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
from fitting_models import synthetic

from saltbench.fitting import FitData
from saltbench.models.temperature import REFERENCE_EXPANSION
from saltbench.water import debye_huckel_constants

TEMPERATURES = (278.15, 288.15, 298.15, 313.15, 328.15)
GRID = np.round(np.linspace(0.05, 2.0, 20), 3)


def ext_dh_at_temperatures(a: float, b_coefficients, electrolyte, *, temperatures=TEMPERATURES,
                           grid=GRID, seed: int | None = None, u: float = 0.002) -> FitData:
    """The extended Debye-Hückel test model (tests/fitting_models.py) at each temperature, with
    ion size ``a`` (Å) and b(T) of the reference-expansion form with coefficients
    ``b_coefficients`` (c0..c3), the Debye-Hückel constants of water at each temperature."""
    parts = []
    for k, t in enumerate(temperatures):
        dh = debye_huckel_constants(t)
        b = float(REFERENCE_EXPANSION.value(np.asarray(b_coefficients, dtype=float), t)[0])
        d = synthetic((a, b), electrolyte, grid, seed=None if seed is None else seed * 100 + k,
                      u_ln=u, u_phi=u, a_gamma=dh.a_gamma, b_gamma=dh.b_gamma_per_angstrom)
        parts.append(FitData(d.molality, d.value, d.uncertainty, d.kind, d.dataset, None, t))
    return FitData.concat(parts)


BIB = """\
[saltmarsh-thermostat-2026]
authors: Saltmarsh Pilot Plant Laboratory
title: Invented osmotic coefficients of QxCl in thermostatted cells (test scenario, invented values)
publisher: saltbench test scenario (invented)
year: 2026
note: invented source for a test scenario; not a real publication
"""


def dataset_files(folder: Path, table: dict[float, tuple[np.ndarray, np.ndarray]], *,
                  uncertainty: float) -> list[Path]:
    """One osmotic-coefficient dataset file per temperature (K -> molality, value) for QxCl, and
    the invented source file."""
    folder.mkdir(parents=True, exist_ok=True)
    paths = [folder / "saltmarsh-thermostat.sources.txt"]
    paths[0].write_text(BIB, encoding="utf-8")
    for t, (m, v) in table.items():
        lines = ["# saltbench dataset 1", "# electrolyte: QxCl",
                 "# cation: Qx, charge +1, molar mass 130.2 g/mol", "# anion: Cl, charge -1",
                 "# property: osmotic", f"# temperature: {t:.2f} K",
                 "# source: saltmarsh-thermostat-2026", f"# table: cell series at {t:.2f} K (invented)",
                 "# precision: 0.00001", f"# uncertainty: {uncertainty}",
                 "# typed: measured by the invented Saltmarsh Pilot Plant laboratory (invented values "
                 "generated from stated coefficients)", "molality,value"]
        lines += [f"{x:g},{y:.6f}" for x, y in zip(m, v)]
        path = folder / f"QxCl.osmotic.{int(round(t))}K.csv"
        path.write_text("\n".join(lines) + "\n", encoding="utf-8")
        paths.append(path)
    return paths
