"""Check values shared by the model tests (read from public copies; see each comment)."""

import numpy as np

# CaCl2 mean activity coefficients at 25 °C, CRC Handbook of Chemistry and Physics (92nd ed.),
# "Mean Activity Coefficients of Electrolytes as a Function of Concentration", p. 5-106 ff.,
# column CaCl2 (compiled from Staples and Nuttall 1977), read off a public copy of the table.
CACL2_M = np.array([0.001, 0.002, 0.005, 0.010, 0.020, 0.050, 0.100, 0.200, 0.500, 1.000, 2.000])
CACL2_GAMMA = np.array([0.888, 0.851, 0.787, 0.727, 0.664, 0.577, 0.517, 0.469, 0.444, 0.495,
                        0.784])
