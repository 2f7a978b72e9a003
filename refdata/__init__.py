"""Curated, cited reference data bundled with saltbench (read through importlib.resources)."""
