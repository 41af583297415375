"""A drawing of a prefix network as SVG, in the dot-diagram convention of the prefix-adder literature
(as in Harris, "A taxonomy of parallel prefix networks", Asilomar 2003, and Knowles, "A family of adders",
ARITH 2001; common practice): one column per bit with the most significant bit on the left, the bitwise
generate/propagate inputs along the top, one row per level below them, a black cell where a group
generate and propagate are both formed, a gray cell where only the group generate is (its propagate is
never needed), wires down each column and a diagonal from the column whose lower span a cell takes.

It reads only the Network's ``prefix`` annotation (ir/network.py: PrefixGraph), so every network the prefix
scheme builds, and any the search produces, is drawn the same way.
"""

from __future__ import annotations

from html import escape

from ..ir.network import PrefixGraph

DX, DY = 22, 34  # column pitch and row pitch, px
R = 6.5  # cell radius
TOP, LEFT, RIGHT, BOTTOM = 58, 30, 30, 62


def _src_col(g: PrefixGraph, ref: int) -> int:
    return -1 - ref if ref < 0 else g.cells[ref].col


def draw_prefix(g: PrefixGraph, title: str = "", carry_in: bool = False) -> str:
    """The SVG text of ``g``. ``carry_in``: column 0 is the carry-in (labelled so)."""
    n = g.inputs
    levels = max((c.level for c in g.cells), default=0)
    width = LEFT + RIGHT + max(n - 1, 0) * DX
    height = TOP + BOTTOM + levels * DY + DY // 2
    legend_w = 330
    width = max(width, legend_w + LEFT)

    def x(col: int) -> float:
        return LEFT + (n - 1 - col) * DX

    def y(level: float) -> float:
        return TOP + level * DY

    out = [f'<svg xmlns="http://www.w3.org/2000/svg" width="{width}" height="{height}" '
           f'viewBox="0 0 {width} {height}" font-family="sans-serif" font-size="10">',
           f'<title>{escape(title or "prefix network")}</title>',
           f'<rect width="{width}" height="{height}" fill="white"/>']
    if title:
        out.append(f'<text x="{LEFT - 10}" y="16" font-size="13" font-weight="bold">{escape(title)}</text>')
    # column numbers above the inputs; every column when they fit, else every 4th and the ends
    step = 1 if n <= 32 else 4
    for col in range(n):
        if col % step == 0 or col == n - 1:
            text = "cin" if carry_in and col == 0 else str(col - 1 if carry_in else col)
            out.append(f'<text x="{x(col):.1f}" y="{TOP - 16}" text-anchor="middle">{text}</text>')
    # the wires: down every column, and a diagonal into each cell from its lower span's column
    bottom = y(levels) + DY / 2
    for col in range(n):
        out.append(f'<line x1="{x(col):.1f}" y1="{y(0):.1f}" x2="{x(col):.1f}" y2="{bottom:.1f}" '
                   'stroke="#555" stroke-width="1"/>')
    for c in g.cells:
        sc = _src_col(g, c.lo)
        out.append(f'<line x1="{x(sc):.1f}" y1="{y(c.level - 1):.1f}" x2="{x(c.col):.1f}" y2="{y(c.level):.1f}" '
                   'stroke="#555" stroke-width="1"/>')
    # inputs: the bitwise (g, p) of each column, drawn as small squares
    for col in range(n):
        out.append(f'<rect x="{x(col) - 4:.1f}" y="{y(0) - 4:.1f}" width="8" height="8" fill="white" '
                   'stroke="black" stroke-width="1"/>')
    for c in g.cells:
        fill = "#9a9a9a" if c.gray else "black"
        out.append(f'<circle cx="{x(c.col):.1f}" cy="{y(c.level):.1f}" r="{R}" fill="{fill}" stroke="black" '
                   f'stroke-width="1"><title>G[{c.col}:{c.low}] level {c.level}'
                   f'{" (generate only)" if c.gray else ""}</title></circle>')
    for lv in range(1, levels + 1):
        out.append(f'<text x="{width - 6}" y="{y(lv) + 3:.1f}" text-anchor="end" fill="#777">{lv}</text>')
    black = sum(not c.gray for c in g.cells)
    gray = len(g.cells) - black
    ly = height - 22
    out += [f'<circle cx="{LEFT}" cy="{ly}" r="{R}" fill="black"/>',
            f'<text x="{LEFT + 10}" y="{ly + 4}">black cell: G and P ({black})</text>',
            f'<circle cx="{LEFT + 150}" cy="{ly}" r="{R}" fill="#9a9a9a" stroke="black"/>',
            f'<text x="{LEFT + 160}" y="{ly + 4}">gray cell: G only ({gray})</text>',
            f'<text x="{LEFT - 10}" y="{height - 4}" fill="#555">{n} columns, {levels} levels; '
            f'bit {n - 1 - int(carry_in)} left, {"carry-in" if carry_in else "bit 0"} right</text>',
            "</svg>"]
    return "\n".join(out) + "\n"


def drawing_files(spec, net) -> dict[str, str]:
    """``{NAME_prefix.svg: drawing}`` for a network with a prefix graph, else nothing (`build --draw`)."""
    if net.prefix is None:
        return {}
    title = f"{spec.name}: {spec.width}-bit {net.prefix.style or 'prefix'} network"
    return {f"{spec.name}_prefix.svg": draw_prefix(net.prefix, title, spec.carry_in)}
