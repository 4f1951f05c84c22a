"""Figures of spectra: reflectance, transmittance and absorptance against wavelength."""

from __future__ import annotations

import numpy as np

from filmoptic.plots import new_figure

__all__ = ["plot_spectrum", "plot_spectra"]


def plot_spectrum(spectrum, title: str | None = None):
    """R, T and A (percent) of a :class:`~filmoptic.engine.Spectrum` against wavelength.

    Parameters
    ----------
    spectrum : filmoptic.engine.Spectrum
        One spectrum (R, T, A of shape ``(W,)``); of a batch only the first member is drawn.
    title : str, optional
        Shown above the plot (usually the stack).

    Returns
    -------
    matplotlib.figure.Figure

    Examples
    --------
    >>> from filmoptic.engine import compute
    >>> fig = plot_spectrum(compute("n=2.3 60nm / n=1.52", [400.0, 500.0, 600.0]))
    >>> [line.get_label() for line in fig.axes[0].lines]
    ['R', 'T', 'A']
    """
    return plot_spectra([(title, spectrum)])


def plot_spectra(panels):
    """One panel per ``(title, spectrum)`` pair, stacked vertically, sharing the wavelength axis.

    Examples
    --------
    >>> from filmoptic.engine import compute
    >>> s = compute("n=2.3 60nm / n=1.52", [400.0, 500.0, 600.0])
    >>> len(plot_spectra([("a", s), ("b", s)]).axes)
    2
    """
    panels = list(panels)
    fig, axes = new_figure(len(panels), 1, figsize=(7.0, 3.6 * len(panels) + 0.6), squeeze=False,
                           sharex=True)
    for ax, (title, spectrum) in zip(axes[:, 0], panels):
        wl = np.asarray(spectrum.wavelength_nm)
        for name, values, style in (("R", spectrum.R, "-"), ("T", spectrum.T, "--"),
                                    ("A", spectrum.A, ":")):
            ax.plot(wl, 100.0 * np.asarray(values).reshape(-1, wl.size)[0], style, label=name, lw=1.6)
        ax.set_ylabel("percent of incident light")
        if wl.size > 1:
            ax.set_xlim(wl.min(), wl.max())
        ax.set_ylim(-2, 102)
        ax.grid(True, alpha=0.3)
        ax.legend(loc="best")
        if title:
            ax.set_title(title, fontsize=10)
    axes[-1, 0].set_xlabel("wavelength (nm)")
    fig.tight_layout()
    return fig
