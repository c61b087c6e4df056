"""Pictures for audit reports: the covering of a two-variable certificate, or a witness.

Display only. Every coordinate here is a float approximation of an exact object
of the certificate (a root of a polynomial at a float abscissa, found with
``numpy.roots``); nothing in this module decides anything, and the checker never
sees it. matplotlib (the ``report`` extra) is imported on use: without it
:func:`draw_covering` and :func:`draw_witness` raise :class:`PictureUnavailable`
with the reason, and the report says the picture was skipped.

Covering pictures, one panel per lemma (the first :data:`MAX_PANELS`): the root
node covers the horizontal x1-axis with intervals; a *direct* interval is a
vertical strip ruled out by one literal; a *lifted* interval is swept from left
to right, and at each abscissa the child node's intervals over x2 are bounded by
the j-th real root of their bound polynomials. Each region is filled in the
colour of the literal that rules it out (overlaps blend), the zero curves of the
lemma's polynomials are drawn thin, and every sample point is a black dot.
"""
from __future__ import annotations

import io
import math
from fractions import Fraction
from functools import partial

from certformat.certificate import NEG_INF, POS_INF, Certificate, Literal, Node, Root
from .certwrite import number_coefficients, poly_terms, poly_text
from certformat.formula import NEGATED

MAX_PANELS = 4
SWEEP = 400
"""Abscissae per lifted interval (and grid points per axis for zero curves)."""


DISPLAY_ONLY = "Drawn in floating point, for display only; the checker decides exactly."


class PictureUnavailable(Exception):
    """No picture can be drawn; the message says why, for the report."""


def _pyplot():
    try:
        import matplotlib
        matplotlib.use("Agg")
        import matplotlib.pyplot as plt
        import numpy as np
    except ImportError as err:
        raise PictureUnavailable(
            f"matplotlib is not installed ({err}); install the 'report' extra: "
            "pip install 'tessella[report]'") from None
    return plt, np


# ---------------------------------------------------------------- numbers

def number_value(cert: Certificate, nid: str) -> float:
    """A float close to the certificate number ``nid`` (rational, or root in (low, high))."""
    num = cert.numbers[nid]
    if num.poly is None:
        return float(num.low)
    low, high, coefficients = num.low, num.high, number_coefficients(num.poly)
    for _ in range(80):  # bisection on the sign, exact at rational points
        mid = (low + high) / 2
        if _sign_change(coefficients, low, mid):
            high = mid
        else:
            low = mid
        if high - low < Fraction(1, 10**15) * (1 + abs(low)):
            break
    return float((low + high) / 2)


def _sign_change(coeffs: tuple[int, ...], a: Fraction, b: Fraction) -> bool:
    def value(x):
        return sum(c * x**k for k, c in enumerate(coeffs))
    va, vb = value(a), value(b)
    return va == 0 or (va < 0) != (vb < 0)


def real_roots(coeffs_low_first, np) -> list[float]:
    """The distinct real roots (sorted) of a float polynomial, constant term first."""
    c = np.asarray(coeffs_low_first, dtype=float)
    nonzero = np.nonzero(c)[0]
    if len(nonzero) == 0 or nonzero[-1] == 0 or not np.all(np.isfinite(c)):
        return []
    c = c[:nonzero[-1] + 1]
    roots = np.roots(c[::-1])
    scale = np.maximum(1.0, np.abs(roots))
    reals = np.sort(roots[np.abs(roots.imag) <= 1e-7 * scale].real)
    distinct: list[float] = []
    for r in reals:
        if not distinct or r - distinct[-1] > 1e-7 * max(1.0, abs(r)):
            distinct.append(float(r))
    return distinct


def _restrict(poly: dict, x1: float) -> list[float]:
    """Coefficients in x2 (constant first) of a two-variable polynomial at x1."""
    degree = max((e[1] for e in poly), default=0)
    out = [0.0] * (degree + 1)
    for (e1, e2), c in poly.items():
        out[e2] += c * x1**e1
    return out


def _poly(cert: Certificate, pid: str) -> dict:
    """The exponent dictionary of polynomial ``pid``."""
    return poly_terms(cert.polys[pid], len(cert.variables))


def _root_at(cert: Certificate, bound, x1: float, np) -> float:
    """The value of a bound of a level-2 node at abscissa x1 (nan when it does not exist)."""
    if bound == NEG_INF:
        return -math.inf
    if bound == POS_INF:
        return math.inf
    roots = real_roots(_restrict(_poly(cert, bound.poly), x1), np)
    return roots[bound.index - 1] if len(roots) >= bound.index else math.nan


def _root_level1(cert: Certificate, bound, np) -> float:
    """The value of a bound of the root node (a root of a polynomial in x1 alone)."""
    if bound == NEG_INF:
        return -math.inf
    if bound == POS_INF:
        return math.inf
    roots = real_roots(_in_x1(_poly(cert, bound.poly)), np)
    return roots[bound.index - 1] if len(roots) >= bound.index else math.nan


def _in_x1(poly: dict) -> list[int]:
    """Coefficients (constant first) of a polynomial in x1 alone."""
    out = [0] * (max((e[0] for e in poly), default=0) + 1)
    for e, c in poly.items():
        out[e[0]] += c
    return out


# ---------------------------------------------------------------- literals

def literal_text(cert: Certificate, lit: Literal, names: list[str]) -> str:
    """``x^2 + y^2 - 4 <= 0``: the constraint that the literal ``lit`` states."""
    claim = cert.atoms.get(lit.name)
    if claim is None:
        return str(lit)
    rel = claim.rel if lit.positive else NEGATED[claim.rel]
    return f"{poly_text(_poly(cert, claim.poly), lambda k: names[k])} {rel} 0"


def certificate_names(cert: Certificate) -> list[str]:
    return [v.name for v in cert.variables]


# ---------------------------------------------------------------- the covering

def _subtree(cert: Certificate, root: str) -> list[Node]:
    nodes, stack = [], [root]
    while stack:
        node = cert.nodes[stack.pop()]
        nodes.append(node)
        stack.extend(seg.child for seg in node.segments if seg.child)
    return nodes


def _window(cert: Certificate, np):
    """A plotting window (x range, y range) around the samples and the critical abscissae."""
    xs, ys = [], []
    for poly in map(partial(_poly, cert), cert.polys):
        if all(e[1] == 0 for e in poly):
            xs += real_roots(_in_x1(poly), np)
    for lemma in cert.lemmas:
        for node in _subtree(cert, lemma.root):
            if not node.sample:
                xs += [number_value(cert, seg.sample) for seg in node.segments]
            else:
                t = number_value(cert, node.sample[0])
                for seg in node.segments:
                    ys.append(number_value(cert, seg.sample))
                    for b in (seg.interval.low, seg.interval.high):
                        if isinstance(b, Root):
                            ys.append(_root_at(cert, b, t, np))
    xs = [x for x in xs if math.isfinite(x)]
    ys = [y for y in ys if math.isfinite(y)]
    x_low, x_high = (min(xs), max(xs)) if xs else (-1.0, 1.0)
    x_span = x_high - x_low or 2 * max(1.0, abs(x_low))
    x_pad = 0.2 * x_span + 0.5
    if ys and max(ys) > min(ys):
        y_low, y_high = min(ys), max(ys)
        y_pad = 0.2 * (y_high - y_low) + 0.5
    else:
        centre = ys[0] if ys else 0.0
        y_low = y_high = centre
        y_pad = 0.5 * x_span + x_pad
    return (x_low - x_pad, x_high + x_pad), (y_low - y_pad, y_high + y_pad)


def draw_covering(cert: Certificate) -> tuple[bytes, str]:
    """A PNG of the covering of a two-variable unsat certificate, and a one-line caption."""
    if len(cert.variables) != 2:
        raise PictureUnavailable(f"pictures are drawn for problems in two variables; this one "
                                 f"has {len(cert.variables)}")
    if not cert.lemmas:
        raise PictureUnavailable("the certificate has no covering (no theory lemma): the "
                                 "problem is refuted by its Boolean structure alone")
    plt, np = _pyplot()
    names = certificate_names(cert)
    lemmas = cert.lemmas[:MAX_PANELS]
    (x0, x1), (y0, y1) = _window(cert, np)
    columns = min(2, len(lemmas))
    rows = -(-len(lemmas) // columns)
    fig, axes = plt.subplots(rows, columns, figsize=(6.6 * columns, 6.4 * rows), squeeze=False)
    for ax in axes.flat[len(lemmas):]:
        ax.set_visible(False)
    for ax, lemma in zip(axes.flat, lemmas):
        _draw_lemma(ax, cert, lemma, names, (x0, x1), (y0, y1), np)
    fig.tight_layout()
    caption = (f"Covering of {len(lemmas)} of {len(cert.lemmas)} lemma(s) over "
               f"{names[0]} (horizontal) and {names[1]} (vertical); window "
               f"{names[0]} in [{x0:.3g}, {x1:.3g}], {names[1]} in [{y0:.3g}, {y1:.3g}]. "
               "Each cell is filled in the colour of the literal that rules it out (overlaps "
               "blend); black dots are sample points, dotted lines the lines the child nodes "
               f"cover, thin curves the zero sets of the lemma's polynomials. {DISPLAY_ONLY}")
    return _png(fig, plt), caption


def _draw_lemma(ax, cert, lemma, names, xr, yr, np) -> None:
    from matplotlib.transforms import offset_copy
    colours = _colours(len(lemma.literals))
    colour = {str(lit): colours[i] for i, lit in enumerate(lemma.literals)}
    used: dict[str, Literal] = {}
    dots = []
    root = cert.nodes[lemma.root]
    for seg in root.segments:
        a = _root_level1(cert, seg.interval.low, np)
        b = a if seg.interval.point else _root_level1(cert, seg.interval.high, np)
        t = number_value(cert, seg.sample)
        if seg.literal is not None:  # a strip (or line) over x1 ruled out by one literal
            key = str(seg.literal)
            used[key] = seg.literal
            if seg.interval.point:
                ax.axvline(a, color=colour[key], lw=2.5, alpha=0.9)
            elif max(a, xr[0]) < min(b, xr[1]):
                ax.axvspan(max(a, xr[0]), min(b, xr[1]), color=colour[key], alpha=0.35, lw=0)
            dots.append((t, yr[0] + 0.02 * (yr[1] - yr[0])))
            continue
        child = cert.nodes[seg.child]
        ax.axvline(t, color="0.55", lw=0.8, ls=":")
        if seg.interval.point:
            xs = np.array([a])
        else:
            lo, hi = max(a, xr[0]), min(b, xr[1])
            if not lo < hi:
                continue
            inset = 1e-9 * (hi - lo)
            xs = np.linspace(lo + inset, hi - inset, SWEEP)
        for k, cseg in enumerate(child.segments):
            key = str(cseg.literal)
            used[key] = cseg.literal
            low = np.array([_root_at(cert, cseg.interval.low, x, np) for x in xs])
            high = low if cseg.interval.point else np.array(
                [_root_at(cert, cseg.interval.high, x, np) for x in xs])
            low, high = np.clip(low, *yr), np.clip(high, *yr)
            if seg.interval.point:  # side by side, so that overlapping pieces both show
                shift = (k - (len(child.segments) - 1) / 2) * 2.5
                ax.plot([a, a], [low[0], high[0]], color=colour[key], lw=2.5, alpha=0.9,
                        solid_capstyle="butt",
                        transform=offset_copy(ax.transData, ax.figure, x=shift, units="points"))
            elif cseg.interval.point:
                ax.plot(xs, low, color=colour[key], lw=2.5, alpha=0.9)
            else:
                ok = np.isfinite(low) & np.isfinite(high)
                ax.fill_between(xs, low, high, where=ok, color=colour[key], alpha=0.35, lw=0)
            dots.append((t, number_value(cert, cseg.sample)))
    _zero_curves(ax, cert, [cert.atoms[lit.name].poly for lit in lemma.literals
                            if lit.name in cert.atoms], xr, yr, np)
    inside = [(x, y) for x, y in dots if xr[0] <= x <= xr[1] and yr[0] <= y <= yr[1]]
    if inside:
        ax.plot(*zip(*inside), "o", color="black", ms=4, zorder=5)
    handles = [_patch(colour[k], f"violates {literal_text(cert, lit, names)}  ({k})")
               for k, lit in used.items()]
    handles.append(ax.plot([], [], "o", color="black", ms=4)[0])
    handles[-1].set_label("sample point of a cell")
    handles.append(ax.plot([], [], color="0.25", lw=0.8)[0])
    handles[-1].set_label("zero curve of a lemma polynomial")
    ax.legend(handles=handles, loc="upper center", bbox_to_anchor=(0.5, -0.1), fontsize=8,
              frameon=False)
    ax.set_xlim(*xr)
    ax.set_ylim(*yr)
    ax.set_xlabel(names[0])
    ax.set_ylabel(names[1])
    literals = " ".join(str(lit) for lit in lemma.literals)
    ax.set_title(f"{lemma.id}: excludes {literals}", fontsize=10)
    if _comparable(xr, yr):
        ax.set_aspect("equal", adjustable="box")


def _colours(k: int) -> list:
    palette = ["#1f77b4", "#ff7f0e", "#2ca02c", "#d62728", "#9467bd", "#8c564b", "#e377c2",
               "#7f7f7f", "#bcbd22", "#17becf"]
    return [palette[i % len(palette)] for i in range(k)]


def _patch(colour, label):
    from matplotlib.patches import Patch
    return Patch(facecolor=colour, alpha=0.5, label=label)


def _comparable(xr, yr) -> bool:
    ratio = (yr[1] - yr[0]) / (xr[1] - xr[0])
    return 0.4 <= ratio <= 2.5


def _zero_curves(ax, cert, poly_ids, xr, yr, np, colour="0.25") -> None:
    gx, gy = np.meshgrid(np.linspace(*xr, SWEEP), np.linspace(*yr, SWEEP))
    for pid in dict.fromkeys(poly_ids):
        values = _evaluate(_poly(cert, pid), (gx, gy), np)
        if np.all(np.isfinite(values)) and values.min() < 0 < values.max():
            ax.contour(gx, gy, values, levels=[0], colors=[colour], linewidths=0.8)


def _evaluate(poly: dict, grid, np):
    total = np.zeros_like(grid[0])
    with np.errstate(all="ignore"):
        for exponents, c in poly.items():
            term = np.full_like(grid[0], float(c))
            for g, e in zip(grid, exponents):
                if e:
                    term = term * g**e
            total = total + term
    return total


def _png(fig, plt) -> bytes:
    buffer = io.BytesIO()
    fig.savefig(buffer, format="png", dpi=100, bbox_inches="tight",
                metadata={"Software": None})
    plt.close(fig)
    return buffer.getvalue()


# ---------------------------------------------------------------- a witness

def draw_witness(cert: Certificate, problem) -> tuple[bytes, str]:
    """A PNG of a two-variable witness over the zero curves of the problem's atoms."""
    if len(cert.variables) != 2:
        raise PictureUnavailable(f"pictures are drawn for problems in two variables; this one "
                                 f"has {len(cert.variables)}")
    plt, np = _pyplot()
    point = [0.0, 0.0]
    for v in cert.variables:
        point[v.problem_index - 1] = number_value(cert, cert.values[f"x{v.index}"])
    names = list(problem.variables)
    half = max(2.0, 1.5 * max(abs(point[0]), abs(point[1])))
    xr = (point[0] - half, point[0] + half)
    yr = (point[1] - half, point[1] + half)
    fig, ax = plt.subplots(figsize=(6.6, 7.2))
    gx, gy = np.meshgrid(np.linspace(*xr, SWEEP), np.linspace(*yr, SWEEP))
    handles = []
    from prover.polytext import poly_to_text
    from matplotlib.lines import Line2D
    colours = _colours(len(problem.atoms()))
    seen = set()
    for atom, colour in zip(problem.atoms(), colours):
        poly = {tuple(int(e) for e in k): int(c) for k, c in atom.poly.to_dict().items()}
        key = tuple(sorted(poly.items()))
        if key in seen:
            continue
        seen.add(key)
        values = _evaluate(poly, (gx, gy), np)
        if np.all(np.isfinite(values)) and values.min() < 0 < values.max():
            ax.contour(gx, gy, values, levels=[0], colors=[colour], linewidths=1.2)
            handles.append(Line2D([], [], color=colour,
                                  label=f"{poly_to_text(atom.poly, names)} = 0"))
    ax.plot([point[0]], [point[1]], "o", color="black", ms=7, zorder=5)
    handles.append(Line2D([], [], marker="o", color="black", ls="", label="the witness"))
    ax.legend(handles=handles, loc="upper center", bbox_to_anchor=(0.5, -0.1), fontsize=8,
              frameon=False)
    ax.set_xlim(*xr)
    ax.set_ylim(*yr)
    ax.set_aspect("equal", adjustable="box")
    ax.set_xlabel(names[0])
    ax.set_ylabel(names[1])
    ax.set_title("Witness and the zero curves of the atoms", fontsize=10)
    fig.tight_layout()
    caption = (f"The witness ({names[0]}, {names[1]}) = ({point[0]:.6g}, {point[1]:.6g}) "
               f"over the zero curves of the problem's atoms. {DISPLAY_ONLY}")
    return _png(fig, plt), caption
