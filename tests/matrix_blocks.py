"""Issue 4's matrix for the simulator and formal runs in test_sim_matrix.py: every block scheme at widths
1, 2, 3, 7, 8, 16, 33, 64 and 128 with a couple of block sizes each (uniform, non-dividing, 1-bit, wider
than the adder, lists, auto), Ling forms, and carry-in/carry-out switched off here and there."""

_SHORT = {"carry-skip": "sk", "carry-select": "sel", "conditional-sum": "csum", "block-lookahead": "bla",
          "lookahead": "la"}

# (scheme, width, block or None, extra keys)
_ROWS = [
    ("carry-skip", 1, "auto", {}), ("carry-skip", 2, 1, {}), ("carry-skip", 3, 2, {"carry_in": False}),
    ("carry-skip", 7, "auto", {}), ("carry-skip", 7, 3, {"carry_out": False}), ("carry-skip", 8, 3, {}),
    ("carry-skip", 8, [1, 3, 3, 1], {}), ("carry-skip", 16, "auto", {"carry_in": False}), ("carry-skip", 16, 5, {}),
    ("carry-skip", 33, "auto", {}), ("carry-skip", 33, 4, {}), ("carry-skip", 64, "auto", {}),
    ("carry-skip", 64, 7, {}), ("carry-skip", 128, "auto", {}),
    ("carry-select", 1, 1, {}), ("carry-select", 2, "auto", {}), ("carry-select", 3, 2, {"carry_in": False}),
    ("carry-select", 7, "auto", {}), ("carry-select", 7, 3, {"carry_out": False}), ("carry-select", 8, 3, {}),
    ("carry-select", 16, "auto", {}), ("carry-select", 16, 5, {"carry_in": False}), ("carry-select", 33, "auto", {}),
    ("carry-select", 33, 4, {}), ("carry-select", 64, "auto", {}), ("carry-select", 64, 6, {}),
    ("carry-select", 128, "auto", {}), ("carry-select", 128, 11, {}),
    ("conditional-sum", 1, 1, {}), ("conditional-sum", 2, 1, {}), ("conditional-sum", 3, 1, {"carry_in": False}),
    ("conditional-sum", 7, 1, {}), ("conditional-sum", 7, 3, {"carry_out": False}), ("conditional-sum", 8, 1, {}),
    ("conditional-sum", 8, [3, 5], {}), ("conditional-sum", 16, 1, {"carry_in": False}),
    ("conditional-sum", 16, 5, {}), ("conditional-sum", 33, 1, {}), ("conditional-sum", 33, 4, {}),
    ("conditional-sum", 64, 1, {}), ("conditional-sum", 64, 6, {}), ("conditional-sum", 128, 1, {}),
    ("conditional-sum", 128, 16, {}),
    ("block-lookahead", 1, 1, {}), ("block-lookahead", 2, 3, {"ling": True}), ("block-lookahead", 3, 2, {}),
    ("block-lookahead", 7, 3, {"ling": True, "carry_in": False}), ("block-lookahead", 8, 4, {}),
    ("block-lookahead", 8, [3, 5], {"ling": True}), ("block-lookahead", 16, 1, {"ling": True}),
    ("block-lookahead", 16, 5, {"carry_out": False}), ("block-lookahead", 33, 4, {}),
    ("block-lookahead", 33, 4, {"ling": True, "group": 2}), ("block-lookahead", 64, 4, {}),
    ("block-lookahead", 64, 3, {"ling": True}), ("block-lookahead", 128, 8, {}),
    ("block-lookahead", 128, 5, {"ling": True, "group": 3}),
    ("lookahead", 1, None, {"ling": True}), ("lookahead", 8, None, {"ling": True}),
    ("lookahead", 33, None, {"ling": True, "carry_in": False}),
]


def _name(scheme, width, block, extra):
    parts = [f"bk_{_SHORT[scheme]}{width}"]
    if block is not None:
        parts.append("b" + ("x".join(map(str, block)) if isinstance(block, list) else str(block)))
    parts += [k if v is True else f"{k}{v}" if not isinstance(v, bool) else f"no{k}" for k, v in extra.items()]
    return "_".join(p.replace("carry_", "c") for p in parts)


CONFIGS = []
for _scheme, _width, _block, _extra in _ROWS:
    cfg = {"name": _name(_scheme, _width, _block, _extra), "width": _width, "scheme": _scheme}
    if _block is not None:
        cfg["block"] = _block
    cfg.update(_extra)
    CONFIGS.append(cfg)
