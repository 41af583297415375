"""The gate-level IR: cells, the frozen Network, the builder, passes over it."""
