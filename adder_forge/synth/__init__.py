"""Measurement by synthesis and place-and-route flows, beside the `+` baseline."""
