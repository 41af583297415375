"""Figures read off the IR: structure, skip-aware timing, delay models, prefix figures."""
