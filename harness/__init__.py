"""saltbench: curated electrolyte activity data and a model-comparison harness.

The import package is deliberately light: nothing heavy (scipy, matplotlib, plugin discovery,
database connections) happens at import time. Start from :mod:`saltbench.api`.
"""

__version__ = "0.1.0"
