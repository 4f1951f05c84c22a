"""Figure of a spectrum fit: measured and fitted curves, and the residuals below them."""

from __future__ import annotations

import numpy as np

from . import new_figure

__all__ = ["plot_fit"]

_COLOURS = {"T": ("tab:blue", "tab:cyan"), "R": ("tab:red", "tab:orange")}


def plot_fit(result, title: str | None = None):
    """Measured points and fitted curves (percent) above, residuals (percentage points) below.

    Parameters
    ----------
    result : filmoptic.fit.FitResult
    title : str, optional
        Defaults to the model and the fitted values.

    Returns
    -------
    matplotlib.figure.Figure
    """
    fig, (top, bottom) = new_figure(
        2, 1, figsize=(7.5, 6.0), sharex=True, gridspec_kw={"height_ratios": [3, 1.3]}
    )
    for index, f in enumerate(result.fitted):
        data_colour, model_colour = _COLOURS.get(f.quantity, ("black", "grey"))
        name = f.quantity + (f" ({f.path.rsplit('/', 1)[-1]})" if f.path else "")
        top.plot(f.wavelength_nm, 100 * f.measured, ".", ms=3, color=data_colour,
                 label=f"measured {name}")
        top.plot(f.wavelength_nm, 100 * f.model, "-", lw=1.3, color=model_colour,
                 label=f"fitted {f.quantity}")
        bottom.plot(f.wavelength_nm, 100 * f.residual, ".", ms=3, color=data_colour)
        if f.sigma is not None:
            bottom.fill_between(f.wavelength_nm, -100 * f.sigma, 100 * f.sigma, color=data_colour,
                                alpha=0.15, lw=0, label="±σ" if index == 0 else None)
    bottom.axhline(0.0, color="black", lw=0.8)
    top.set_ylabel("T, R (%)")
    bottom.set_ylabel("measured − fit\n(% points)")
    bottom.set_xlabel("wavelength (nm)")
    top.legend(fontsize="small", loc="best")
    top.grid(alpha=0.3)
    bottom.grid(alpha=0.3)
    if title is None:
        values = [
            f"{p.name} = {p.value:.4g}"
            + (f" ± {p.stderr:.2g}" if np.isfinite(p.stderr) else "")
            + (f" {p.unit}" if p.unit else "")
            for p in result.parameters
        ]
        # Two values per line keeps the title narrower than the axes.
        lines = ["; ".join(values[i:i + 2]) for i in range(0, len(values), 2)]
        title = "\n".join([result.model, *lines])
    top.set_title(title, fontsize="small")
    return fig
