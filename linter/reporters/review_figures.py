"""Figures of the reviewer's audit: matplotlib (Agg) drawings returned as inline SVG text.

matplotlib is an optional extra (``pip install deckwarden[plot]``), imported on first use; without
it :func:`available` is False and the audit says the figures were skipped. Figures are drawn from
numbers only: no deck string (material names, paths) ever enters a figure, so the SVG cannot carry
markup from a deck. Points are labelled by number; the HTML caption lists what each number is.
Text is drawn as paths (``svg.fonttype = "path"``), the XML prolog, comments and metadata are
stripped, and every ``id`` is prefixed so that several figures can live in one HTML document.
"""
from __future__ import annotations

import io
import math
import re
from typing import Optional

_MPL = None
_COUNTER = [0]
#: colours of the three hyperelastic test modes and of the marks (colour-blind safe pairs)
MODE_COLORS = {"UT": "#1f77b4", "ET": "#d62728", "PS": "#2ca02c"}


def available() -> bool:
    return _pyplot() is not None


def _pyplot():
    global _MPL
    if _MPL is None:
        try:
            import matplotlib

            matplotlib.use("Agg", force=True)
            import matplotlib.pyplot as plt

            plt.rcParams.update({"svg.fonttype": "path", "svg.hashsalt": "deckwarden", "font.size": 9,
                                 "axes.grid": True, "grid.alpha": 0.3, "xtick.minor.visible": False,
                                 "ytick.minor.visible": False})
            _MPL = plt
        except Exception:  # not installed, or broken: figures are skipped
            _MPL = False
    return _MPL or None


_PROLOG = re.compile(r"<\?xml[^>]*\?>|<!DOCTYPE[^>]*>|<!--.*?-->|<metadata>.*?</metadata>", re.S)
_ID = re.compile(r'\bid="([^"]+)"')


def _svg(fig) -> str:
    plt = _pyplot()
    buf = io.StringIO()
    fig.savefig(buf, format="svg", metadata={"Date": None, "Creator": None,
                                                                  "Format": None, "Type": None})
    plt.close(fig)
    s = _PROLOG.sub("", buf.getvalue()).strip()
    _COUNTER[0] += 1
    prefix = f"f{_COUNTER[0]}-"
    ids = set(_ID.findall(s))
    s = _ID.sub(lambda m: f'id="{prefix}{m.group(1)}"', s)
    s = re.sub(r'(url\(#|href="#)([^)"]+)', lambda m: m.group(1) + (prefix + m.group(2) if m.group(2) in ids
                                                                     else m.group(2)), s)
    return s.replace("<svg", '<svg role="img" class="figure"', 1)


def _decade(v: float, _pos=None) -> str:
    if v <= 0:
        return ""
    e = math.log10(v)
    return f"1e{round(e)}" if abs(e - round(e)) < 1e-9 else f"{v:g}"


def _kg_of_nu(nu: float) -> float:
    return 2.0 * (1.0 + nu) / (3.0 * (1.0 - 2.0 * nu))


def admissibility_map(points: list[dict], e_label: str, band_nu: float) -> Optional[str]:
    """Isotropic rows as points: x = K/G (log), y = E (log); top axis in nu.

    ``points``: {"n": label number, "E", "nu", "kind": "elastic"|"hyper", "locking": bool}.
    Rows outside the admissible region (E <= 0, nu <= -1 or nu >= 0.5) have no finite positive K/G or E:
    they are drawn in red strips along the borders.
    """
    plt = _pyplot()
    if plt is None or not points:
        return None
    import numpy as np

    fig, ax = plt.subplots(figsize=(7.2, 4.2))
    fig.subplots_adjust(left=0.11, right=0.97, bottom=0.13, top=0.85)  # fixed margins: a layout engine is slow
    ok = [p for p in points if p["E"] is not None and p["nu"] is not None]
    es = [p["E"] for p in ok if p["E"] > 0 and -1 < p["nu"] < 0.5]
    lo = min(es) / 10 if es else 1e5
    hi = max(es) * 10 if es else 1e12
    kgs = [_kg_of_nu(p["nu"]) for p in ok if p["E"] > 0 and -1 < p["nu"] < 0.5]
    xlo = min([0.05] + [k / 2 for k in kgs])
    xhi = max([5 * _kg_of_nu(band_nu), 5e3] + [k * 3 for k in kgs])
    ax.set_xscale("log")
    ax.set_yscale("log")
    for axis in (ax.xaxis, ax.yaxis):
        axis.set_minor_locator(plt.NullLocator())
        axis.set_major_formatter(plt.FuncFormatter(_decade))  # plain text: mathtext labels are slow
    x_out_lo, x_out_hi, y_out = xlo / 1.8, xhi * 1.8, lo / 2.2
    ax.set_xlim(x_out_lo / 1.3, x_out_hi * 1.3)
    ax.set_ylim(y_out / 1.6, hi)
    ax.axvspan(xlo, xhi, ymin=0, ymax=1, color="#e8f4e8", zorder=0)
    ax.axvspan(_kg_of_nu(band_nu), xhi, color="#fde9c8", zorder=0.5)
    for a, b in ((x_out_lo / 1.3, xlo), (xhi, x_out_hi * 1.3)):
        ax.axvspan(a, b, color="#f9d6d5", zorder=0.6)
    ax.axhspan(y_out / 1.6, lo, color="#f9d6d5", zorder=0.6)
    ax.axvline(_kg_of_nu(band_nu), color="#b36b00", lw=0.8, ls="--")
    labels: dict[tuple, list] = {}  # points at the same place share one label ("1, 2")
    for p in ok:
        E, nu = p["E"], p["nu"]
        admissible = E > 0 and -1 < nu < 0.5
        x = _kg_of_nu(nu) if -1 < nu < 0.5 else (x_out_hi if nu >= 0.5 else x_out_lo)
        y = E if E > 0 else y_out
        marker = "D" if p.get("kind") == "hyper" else "o"
        color = "#1f4e79" if admissible else "#c00000"
        ax.scatter([x], [y], marker=marker, s=36, color=color, zorder=3,
                   edgecolors="black" if p.get("locking") else "none", linewidths=1.6 if p.get("locking") else 0)
        if p.get("locking"):
            ax.scatter([x], [y], marker="o", s=140, facecolors="none", edgecolors="#c00000", linewidths=1.2,
                       zorder=2)
        key = (round(math.log10(x), 2), round(math.log10(y), 2))
        labels.setdefault(key, [x, y, []])[2].append(str(p["n"]))
    for x, y, names in labels.values():
        right = x >= x_out_hi
        text = ", ".join(names) if len(names) <= 4 else f"{names[0]}, {names[1]} ... {names[-1]} ({len(names)})"
        ax.annotate(text, (x, y), textcoords="offset points", xytext=(-6 if right else 5, 4), fontsize=8,
                    ha="right" if right else "left", zorder=4)
    ax.set_xlabel("K/G (log scale); red strips: nu <= -1 (left), nu >= 0.5 (right), E <= 0 (bottom)")
    ax.set_ylabel(f"E [{e_label}]")
    top = ax.secondary_xaxis("top", functions=(lambda k: np.asarray(k, float), lambda k: np.asarray(k, float)))
    nus = [-0.5, 0.0, 0.3, 0.45, 0.49, 0.499, 0.4999]
    ticks = [(_kg_of_nu(n), n) for n in nus if xlo <= _kg_of_nu(n) <= xhi]
    top.set_xticks([t for t, _ in ticks], [f"{n:g}" for _, n in ticks])
    top.minorticks_off()
    top.set_xlabel("Poisson's ratio nu")
    ax.text(math.sqrt(_kg_of_nu(band_nu) * xhi), hi / 1.5, f"nearly incompressible\nnu >= {band_nu:g}",
            ha="center", va="top", fontsize=8, color="#7a4a00")
    return _svg(fig)


def hyper_curves(rows: list[dict], stress_label: str) -> Optional[str]:
    """Nominal stress against stretch in UT, ET and PS for each row (``model`` from hyper_models, label,
    ``unstable``: {mode: [[lo, hi], ...]}), unstable ranges shaded in the mode's colour."""
    plt = _pyplot()
    if plt is None or not rows:
        return None
    import numpy as np

    from ..physics import hyper_stability as HS

    fig, axes = plt.subplots(1, 3, figsize=(9.0, 3.2), sharey=False)
    fig.subplots_adjust(left=0.08, right=0.99, bottom=0.15, top=0.9, wspace=0.32)
    lam = np.concatenate([np.linspace(0.5, 1.0, 100, endpoint=False), np.linspace(1.0, 3.0, 200)])
    styles = ["-", "--", ":", "-."]
    for ax, mode in zip(axes, HS.MODES):
        for k, row in enumerate(rows[:4]):
            with np.errstate(all="ignore"):
                s = HS.nominal_stress(row["model"], mode, lam)
            s = np.where(np.isfinite(s), s, np.nan)
            ax.plot(lam, s, styles[k % 4], color=MODE_COLORS[mode], lw=1.4, label=row["label"])
            for lo_, hi_ in (row.get("unstable") or {}).get(mode, ()):
                a, b = max(lo_, lam[0]), min(hi_, lam[-1])
                if b > a:
                    ax.axvspan(a, b, color=MODE_COLORS[mode], alpha=0.12, lw=0)
        ax.axvline(1.0, color="grey", lw=0.6)
        ax.axhline(0.0, color="grey", lw=0.6)
        ax.set_title(f"{HS.MODE_NAMES[mode]} ({mode})")
        ax.set_xlabel("stretch")
        ax.set_xlim(lam[0], lam[-1])
        # the scale follows tension and moderate compression (stretch >= 0.7): near 0.5 some forms stiffen
        # so much in compression that the tension part would be a flat line
        inner = lam >= 0.7
        with np.errstate(all="ignore"):
            finite = np.concatenate([np.asarray(HS.nominal_stress(r["model"], mode, lam[inner]), float)
                                     for r in rows[:4]])
        finite = finite[np.isfinite(finite)]
        if finite.size:
            lo_, hi_ = float(finite.min()), float(finite.max())
            pad = 0.1 * (hi_ - lo_ or abs(hi_) or 1.0)
            ax.set_ylim(lo_ - pad, hi_ + pad)
    axes[0].set_ylabel(f"nominal stress [{stress_label}]")
    if len(rows) > 1:
        axes[0].legend(fontsize=7)
    return _svg(fig)


def hardening(curves: list[dict], stress_label: str) -> Optional[str]:
    """Yield stress against plastic strain per temperature; ``bad`` points (a finding names them) marked."""
    plt = _pyplot()
    if plt is None or not curves:
        return None
    fig, ax = plt.subplots(figsize=(6.0, 3.6))
    fig.subplots_adjust(left=0.13, right=0.97, bottom=0.14, top=0.96)
    for c in curves[:12]:
        ax.plot(c["strain"], c["stress"], "-o", ms=3, lw=1.2, label=c["label"])
        bad = [(e, s) for e, s, b in zip(c["strain"], c["stress"], c["bad"]) if b]
        if bad:
            ax.scatter([b[0] for b in bad], [b[1] for b in bad], s=90, facecolors="none", edgecolors="#c00000",
                       linewidths=1.6, zorder=4)
    ax.set_xlabel("plastic strain")
    ax.set_ylabel(f"yield stress [{stress_label}]")
    if len(curves) > 1:
        ax.legend(fontsize=7, ncol=2)
    return _svg(fig)


def against_temperature(series: list[dict]) -> Optional[str]:
    """One small plot per constant: {"name", "label" (axis label), "T": [...], "values": [...]}."""
    plt = _pyplot()
    if plt is None or not series:
        return None
    n = min(len(series), 4)
    fig, axes = plt.subplots(1, n, figsize=(3.0 * n, 2.8), squeeze=False)
    fig.subplots_adjust(left=0.6 / (3.0 * n) * 1.6, right=0.98, bottom=0.18, top=0.95, wspace=0.45)
    for ax, s in zip(axes[0], series[:n]):
        ax.plot(s["T"], s["values"], "-o", ms=3, lw=1.2, color="#1f4e79")
        ax.set_xlabel("temperature (deck scale)")
        ax.set_ylabel(s["label"])
    return _svg(fig)
