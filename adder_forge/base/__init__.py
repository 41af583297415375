"""Foundation used by every layer: errors, names, version, running external tools, progress."""
