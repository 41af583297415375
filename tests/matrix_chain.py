"""Issue 14's matrix for the simulator and formal runs in test_sim_matrix.py: the FPGA carry-chain hybrids at
odd and even widths with uniform, non-dividing, 1-bit, wider-than-the-adder, listed and automatic blocks
(both targets), every join and a few prefix networks, carry-in and carry-out switched off here and there.
Sized for CI: widths up to 96 (the built-in check in test_chain_schemes.py goes to 256)."""

# (name, width, scheme, keys)
_ROWS = [
    ("ch_px1", 1, "chain-prefix", {"block": 1}),
    ("ch_px3_b1", 3, "chain-prefix", {"block": 1, "carry_in": False}),
    ("ch_px7_b2", 7, "chain-prefix", {"block": 2, "prefix": "kogge-stone"}),
    ("ch_px13_b3", 13, "chain-prefix", {"block": 3, "prefix": "brent-kung", "carry_out": False}),
    ("ch_px16_b20", 16, "chain-prefix", {"block": 20}),
    ("ch_px33_list", 33, "chain-prefix", {"block": [5, 9, 1, 18], "prefix": "han-carlson"}),
    ("ch_px64_auto", 64, "chain-prefix", {"block": "auto"}),
    ("ch_px96_ecp5", 96, "chain-prefix", {"block": "auto", "target": "ecp5", "prefix": "ladner-fischer"}),
    ("ch_sl2", 2, "chain-select", {"block": 1}),
    ("ch_sl6_one", 6, "chain-select", {"block": 6, "join": "chain"}),
    ("ch_sl5_b2", 5, "chain-select", {"block": 2, "carry_in": False, "carry_out": False}),
    ("ch_sl9_chain", 9, "chain-select", {"block": 2, "join": "chain"}),
    ("ch_sl17_b4", 17, "chain-select", {"block": 4}),
    ("ch_sl31_chain", 31, "chain-select", {"block": [3, 7, 7, 14], "join": "chain", "carry_in": False}),
    ("ch_sl64_auto", 64, "chain-select", {"block": "auto"}),
    ("ch_sl64_chain", 64, "chain-select", {"block": "auto", "join": "chain", "carry_out": False}),
    ("ch_sl96_ecp5", 96, "chain-select", {"block": "auto", "target": "ecp5"}),
]

CONFIGS = [{"name": n, "width": w, "scheme": s, **k} for n, w, s, k in _ROWS]
