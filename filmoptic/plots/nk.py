"""Figure: refractive index n and extinction coefficient k against wavelength.

The visible band (380–780 nm, what colour and luminous values are computed over) is shaded, so a
dataset that stops short of it, or only just reaches it, shows at a glance.
"""

from __future__ import annotations

import numpy as np

from . import mark_visible_band, new_figure

__all__ = ["plot_nk"]


def plot_nk(curves, title: str | None = None):
    """Draw n (top) and k (bottom) against wavelength, one line per dataset.

    Parameters
    ----------
    curves : sequence of (label, wavelength_nm, N)
        ``N`` is the complex index n + i·k at ``wavelength_nm``.
    title : str, optional
        Figure title.

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> import numpy as np
    >>> wl = np.linspace(400, 800, 5)
    >>> fig = plot_nk([("n=1.5", wl, np.full(5, 1.5 + 0j))])
    >>> [ax.get_ylabel() for ax in fig.axes]
    ['refractive index n', 'extinction coefficient k']
    """
    fig, (ax_n, ax_k) = new_figure(2, 1, sharex=True, figsize=(7.0, 6.0))
    for label, wavelength_nm, N in curves:
        wl = np.asarray(wavelength_nm, dtype=float)
        N = np.asarray(N, dtype=complex)
        (line,) = ax_n.plot(wl, N.real, label=label)
        ax_k.plot(wl, N.imag, color=line.get_color(), label=label)
    ax_n.set_ylabel("refractive index n")
    ax_k.set_ylabel("extinction coefficient k")
    ax_k.set_xlabel("wavelength (nm)")
    ax_k.set_ylim(bottom=0.0)
    for ax in (ax_n, ax_k):
        ax.grid(True, alpha=0.3)
        mark_visible_band(ax, label=ax is ax_n)
    if len(curves) > 1 or curves and curves[0][0]:
        ax_n.legend(fontsize="small", loc="best")
    if title:
        ax_n.set_title(title, pad=14)
    fig.tight_layout()
    return fig
