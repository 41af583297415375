"""Issue 3's matrix for the simulator and formal runs (test_sim_matrix.py): every prefix network at the
adder widths 1, 2, 3, 5, 8, 13, 16, 31, 32, 33, 64, 100 and 128, the carry-in/carry-out combinations taken
in turn across the widths, plus Ling and sparse-tree variants at a few widths."""

from adder_forge.schemes.prefix_networks import NETWORKS, param_levels

WIDTHS = (1, 2, 3, 5, 8, 13, 16, 31, 32, 33, 64, 100, 128)
FLAGS = ((True, True), (False, True), (True, False), (False, False))
SHORT = {"kogge-stone": "ks", "brent-kung": "bk", "sklansky": "sk", "han-carlson": "hc", "ladner-fischer": "lf",
         "ladner-fischer-p0": "lf0", "knowles": "kn", "harris": "hx"}


def params(network: str, width: int, carry_in: bool) -> dict:
    """An interior point of the parameterised families where the width has one: Harris (1, 1, L-3) and
    Knowles [4, 2, 1, ..., 1] (the corners at small widths)."""
    L = param_levels(width + carry_in)
    if network == "harris":
        return {"taxonomy": [1, 1, L - 3] if L >= 3 else [0, 0, L - 1]}
    if network == "knowles":
        return {"fanouts": ([4, 2] + [1] * (L - 2)) if L >= 3 else [1 << k for k in range(L - 1, -1, -1)]}
    return {}


def _config(network, width, k, tag="", **extra):
    ci, co = FLAGS[k % len(FLAGS)]
    return {"name": f"px_{SHORT[network]}{width}_{int(ci)}{int(co)}{tag}", "width": width, "scheme": "prefix",
            "carry_in": ci, "carry_out": co, "prefix": network, **params(network, width, ci), **extra}


assert set(SHORT) == set(NETWORKS), "give every prefix network a short name for the matrix"

CONFIGS = [_config(net, w, k + j) for j, net in enumerate(sorted(NETWORKS)) for k, w in enumerate(WIDTHS)]
CONFIGS += [_config(net, w, k, "_ling", ling=True)
            for k, (net, w) in enumerate([("kogge-stone", 8), ("sklansky", 16), ("brent-kung", 33),
                                          ("han-carlson", 64), ("knowles", 32), ("harris", 100)])]
CONFIGS += [_config(net, w, k, f"_b{blk}", block=blk)
            for k, (net, w, blk) in enumerate([("kogge-stone", 16, 4), ("sklansky", 32, 4), ("brent-kung", 64, 8),
                                               ("kogge-stone", 13, 4), ("han-carlson", 100, 8)])]
CONFIGS += [_config("kogge-stone", 32, 1, "_b4_ling", block=4, ling=True),
            _config("sklansky", 31, 2, "_blist", block=[3, 8, 8, 8, 4])]
