"""Issue 2's matrix: every foundation scheme at widths 1, 2, 3, 7, 8, 16, 33, 64 with and without
carry_in/carry_out, for the simulator and formal runs in test_sim_matrix.py."""

WIDTHS = (1, 2, 3, 7, 8, 16, 33, 64)
SCHEMES = ("ripple", "lookahead", "behavioral")

CONFIGS = [
    {"name": f"fd_{s[:3]}{w}_{int(ci)}{int(co)}", "width": w, "scheme": s, "carry_in": ci, "carry_out": co}
    for s in SCHEMES
    for w in WIDTHS
    for ci in (False, True)
    for co in (False, True)
]
