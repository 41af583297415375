"""Specs: the YAML loader and the registry of schemes and the keys each accepts."""
