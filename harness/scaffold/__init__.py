"""Templates for an in-house model: a drop-in file or a small installable package."""
