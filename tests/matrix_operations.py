"""Subtract, add-subtract and overflow across the schemes for test_sim_matrix.py (both simulators, lint, the
proof): every scheme once at 8 bits and once at a wide width, the operations and carry ports taken in
turn, overflow on most."""

_SCHEMES = [("ripple", {}), ("lookahead", {}), ("block-lookahead", {}), ("carry-select", {}), ("carry-skip", {}),
            ("conditional-sum", {}), ("behavioral", {}), ("prefix", {"prefix": "kogge-stone"}),
            ("prefix", {"prefix": "brent-kung", "ling": True}), ("prefix", {"prefix": "sklansky", "block": 4})]
_OPS = ("subtract", "add-subtract")
_FLAGS = ((True, True), (False, True), (True, False), (False, False))


def _config(k: int, scheme: str, keys: dict, width: int) -> dict:
    op = _OPS[k % 2]
    ci, co = _FLAGS[(k // 2) % 4]
    tag = "".join(w[0] for w in scheme.split("-")) + "".join(str(v)[0] for v in keys.values())
    return {"name": f"op_{tag}{width}_{op[:6].replace('-', '')}_{int(ci)}{int(co)}", "width": width,
            "scheme": scheme, "carry_in": ci, "carry_out": co, "operation": op, "overflow": k % 5 != 4, **keys}


# the flat lookahead grows as n^3: 16 bits is its wide point
CONFIGS = [_config(k, s, keys, 8) for k, (s, keys) in enumerate(_SCHEMES)]
CONFIGS += [_config(k + 1, s, keys, 16 if s == "lookahead" else 64) for k, (s, keys) in enumerate(_SCHEMES)]
