"""``filmoptic solve``: the thickness that meets a target or explains a reading.

The condition options are shared with ``filmoptic compare`` (:func:`condition_options` and
:func:`build_conditions`), so both commands accept exactly the same targets.
"""

from __future__ import annotations

import math
import re
from dataclasses import dataclass
from pathlib import Path

import click

from filmoptic.cli.anodize import law_from_options, law_options, volts_from_option
from filmoptic.cli._common import (
    FiniteFloatRange,
    ambient_option,
    angle_option,
    check_plot_path,
    echo_caution,
    emit_json,
    extrapolate_option,
    json_option,
    percent,
    print_table,
    save_plot,
    to_jsonable,
    user_errors,
    write_atomically,
    echo_surface_oxides,
    warn_thin_metal,
)

#: Luminous transmittance below which a caution about eye protection is printed (common practice:
#: welding and sun filters start far below this, and nobody should take a computed one for them).
EYE_CAUTION_BELOW = 0.10
EYE_CAUTION = (
    "a luminous transmittance below 10 % was asked for or computed. A computed filter is no eye "
    "protection for sun, welding or laser viewing: such filters need certified measurement over the "
    "UV, visible and IR to the applicable standard."
)

_CONDITION_OPTIONS = [
    click.option("--luminous-T", "luminous_t", metavar="VALUE",
                 help="Luminous transmittance to reach (ISO 9050, D65 unless --illuminant), e.g. 30% or 0.3."),
    click.option("--luminous-R", "luminous_r", metavar="VALUE",
                 help="Luminous reflectance to reach, seen from the coated side (--side reverse: "
                      "from the substrate side)."),
    click.option("--T-at", "t_at", multiple=True, metavar="WL=VALUE",
                 help="Transmittance at one wavelength (nm), e.g. 550=40%. Repeatable."),
    click.option("--R-at", "r_at", multiple=True, metavar="WL=VALUE",
                 help="Reflectance at one wavelength (nm), e.g. 633=0.5. Repeatable."),
    click.option("--lab", "lab", multiple=True, metavar="L,a,b",
                 help="Colour to match, as CIELAB under the illuminant; nearest by ΔE00. Repeatable."),
    click.option("--hex", "hex_", multiple=True, metavar="#RRGGBB",
                 help="Colour to match, as an sRGB colour; nearest by ΔE00. Repeatable."),
    click.option("--appearance", type=click.Choice(["reflected", "transmitted"]), default="reflected",
                 show_default=True, help="Whether --lab/--hex colours are seen in reflection or transmission."),
    click.option("--side", type=click.Choice(["front", "reverse"]), default="front", show_default=True,
                 help="Look from the coated side (front) or through the substrate (reverse)."),
    click.option("--illuminant", default="D65", show_default=True, metavar="NAME",
                 help="Illuminant for luminous values and colours (D65, A, F11, … or a spectrum file)."),
    click.option("--reading", metavar="VALUE",
                 help="A measured transmittance reading: a fraction (0.304), a percentage (30.4%) or the "
                      "raw numbers off the meter, SAMPLE/REFERENCE or SAMPLE/REFERENCE/DARK, with or without "
                      "a unit on every number (318/1045, 318lx/1045lx, 2.3V/7.1V/0.02V, 12.1uA/40.2uA; V, mV, "
                      "uA, nA, lx, W, mW, counts). Numbers with different units are refused."),
    click.option("--dark", metavar="VALUE",
                 help="The meter's reading with the light blocked (e.g. 0.02V), subtracted from sample and "
                      "reference: (S - D)/(R - D). Or give it as the third number of --reading."),
    click.option("--source", default="D65", show_default=True, metavar="LIGHT",
                 help="Light of the reading: an illuminant (A for a halogen lamp, D65, …), laser:WL for a "
                      "laser line, led:WL/FWHM for an LED (Gaussian; led:WL alone takes a 25 nm width and "
                      "says so), or a two-column spectrum file."),
    click.option("--detector", default="photopic", show_default=True, metavar="SENSOR",
                 help="photopic (a lux meter), flat (a power meter or thermal sensor), silicon (a silicon "
                      "photodiode, typical published response; also 'si') or a two-column response file."),
    click.option("--reference", type=click.Choice(["open", "bare"]), default="open", show_default=True,
                 help="The reading is relative to the open beam, or to an uncoated piece of the same substrate."),
    click.option("--uncertainty", metavar="U",
                 help="Uncertainty of every condition: N% is N percent of the value (2% of a 30 % reading "
                      "is ±0.6 points), Npp is N percentage points (2pp is ±2 points), a bare number is in "
                      "the condition's own unit (a fraction, 0.02; ΔE00 for colours). Turns each solution "
                      "into an interval; the output says which kind it was."),
]


def condition_options(func):
    """Decorate a click command with the shared condition options."""
    for option in reversed(_CONDITION_OPTIONS):
        func = option(func)
    return func


def _wl_value(text: str, what: str):
    from filmoptic.errors import FilmopticError
    from filmoptic.units import parse_fraction, parse_number

    if "=" not in text:
        raise FilmopticError(f"{what}: write WAVELENGTH=VALUE like 550=40%, got {text!r}")
    wl_text, value_text = text.split("=", 1)
    wl = parse_number(wl_text.strip().removesuffix("nm").strip(), f"{what} wavelength")
    if not 0 < wl <= 1e6:
        raise FilmopticError(f"{what}: the wavelength must be positive, in nm, got {wl_text!r}")
    return wl, parse_fraction(value_text, what=what)


def _given(name: str, differs_from_default: bool) -> bool:
    """Whether the user typed option ``name`` (not just its default) in the running command."""
    from click.core import ParameterSource

    ctx = click.get_current_context(silent=True)
    source = ctx.get_parameter_source(name) if ctx is not None else None
    if source is None:
        return differs_from_default
    return source not in (ParameterSource.DEFAULT, ParameterSource.DEFAULT_MAP)


def uncertainty_spec(u_text, colour: bool = False):
    """``--uncertainty`` as ``(amount, kind)`` (see :func:`filmoptic.units.parse_uncertainty_spec`),
    or None; a bare number above 1 for a fraction and a percentage for a colour are refused."""
    from filmoptic.errors import FilmopticError
    from filmoptic.units import parse_uncertainty_spec

    if u_text is None:
        return None
    amount, kind = parse_uncertainty_spec(u_text)
    if colour and kind != "absolute":
        raise FilmopticError("--uncertainty for a colour is a ΔE00 value, not a percentage")
    if not colour and kind == "absolute" and amount > 1:
        shown = str(u_text).strip()
        raise FilmopticError(
            f"--uncertainty {shown}: a transmittance or reflectance is a fraction 0–1, so {shown} would be "
            f"±{100 * amount:g} %; did you mean {shown}% ({shown} percent of the value) or {shown}pp "
            f"({shown} percentage points)?"
        )
    return amount, kind


def describe_uncertainty(u_text) -> str:
    """``2%`` → "2 % of the value"; ``2pp`` → "2 percentage points"; ``0.01`` → "0.01 (absolute)"."""
    from filmoptic.units import parse_uncertainty_spec

    amount, kind = parse_uncertainty_spec(u_text)
    if kind == "relative":
        return f"{100 * amount:g} % of the value"
    if kind == "points":
        return f"{100 * amount:g} percentage points"
    return f"{amount:g} (absolute)"


def _reading_condition(opts):
    """The Reading condition (and the meter reading behind it) from the shared options."""
    from filmoptic.notes import note, warn
    from filmoptic.inverse.readings import band_weights, parse_reading, resolve_source
    from filmoptic.inverse.solve import Reading

    source, default_note = resolve_source(opts.get("source", "D65"))
    detector = opts.get("detector", "photopic")
    # Validate the source and detector now so that a typo is reported before any work.
    band_weights(source, detector)
    if default_note:
        note(default_note)
    meter = None
    if opts.get("reading") is not None:
        meter = parse_reading(opts["reading"], dark=opts.get("dark"))
        _check_unit_and_detector(meter.unit, detector, warn)
    value = 0.0 if meter is None else meter.ratio
    return Reading(value, source, detector, opts.get("reference", "open"), 0.0), meter


def _check_unit_and_detector(unit, detector, warn) -> None:
    """Lux comes from a lux meter, whose detector is photopic: say so when another is modelled."""
    if unit == "lx" and str(detector).strip().lower() != "photopic":
        warn(f"the readings are in lux, which a lux meter (a photopic detector) gives, but --detector "
             f"{detector} models another sensor; use --detector photopic unless the meter reads lux "
             "through another response")


def build_conditions(opts: dict, need_value: bool = True) -> list:
    """Turn the shared options into Target/ColourTarget/Reading conditions (in a fixed order).

    With ``need_value=False`` a reading condition is built even without ``--reading`` (for a
    column of readings, whose values come from a file).
    """
    from filmoptic.errors import FilmopticError
    from filmoptic.inverse.solve import ColourTarget, Target, lab_from_hex, parse_lab
    from filmoptic.units import parse_fraction

    u_text = opts.get("uncertainty")

    def unc(value, colour=False):
        spec = uncertainty_spec(u_text, colour)
        if spec is None:
            return 0.0
        amount, kind = spec
        return amount * abs(value) if kind == "relative" else amount

    side, illuminant = opts.get("side", "front"), opts.get("illuminant", "D65")
    conditions = []
    if opts.get("luminous_t") is not None:
        v = parse_fraction(opts["luminous_t"], what="--luminous-T")
        conditions.append(Target("luminous_T", v, side=side, uncertainty=unc(v), illuminant=illuminant))
    if opts.get("luminous_r") is not None:
        v = parse_fraction(opts["luminous_r"], what="--luminous-R")
        conditions.append(Target("luminous_R", v, side=side, uncertainty=unc(v), illuminant=illuminant))
    for text in opts.get("t_at") or ():
        wl, v = _wl_value(text, "--T-at")
        conditions.append(Target("T", v, wavelength_nm=wl, side=side, uncertainty=unc(v)))
    for text in opts.get("r_at") or ():
        wl, v = _wl_value(text, "--R-at")
        conditions.append(Target("R", v, wavelength_nm=wl, side=side, uncertainty=unc(v)))
    appearance = opts.get("appearance", "reflected")
    if _given("appearance", appearance != "reflected") and not (opts.get("lab") or opts.get("hex_")):
        raise FilmopticError(
            f"--appearance {appearance} applies to a colour target: add --lab L,a,b or --hex #RRGGBB, "
            "or drop --appearance (luminous and single-wavelength targets name T or R themselves)"
        )
    for text in opts.get("lab") or ():
        conditions.append(ColourTarget(parse_lab(text), appearance, side, unc(None, True), illuminant, text))
    for text in opts.get("hex_") or ():
        conditions.append(ColourTarget(lab_from_hex(text, illuminant), appearance, side, unc(None, True),
                                       illuminant, text))
    reading_options = [f"--{name}" for name, default in (("source", "D65"), ("detector", "photopic"),
                                                          ("reference", "open"), ("dark", None))
                       if _given(name, opts.get(name, default) != default)]
    if opts.get("reading") is None and need_value and reading_options:
        one = len(reading_options) == 1
        names = " and ".join([", ".join(reading_options[:-1]), reading_options[-1]] if not one else reading_options)
        raise FilmopticError(
            f"{names} describe{'s' if one else ''} a measured reading: add --reading VALUE, or drop "
            f"{'it' if one else 'them'}"
        )
    if opts.get("reading") is not None or not need_value:
        reading, _ = _reading_condition(opts)
        conditions.append(reading.with_value(reading.value, unc(reading.value)))
    if not conditions:
        raise FilmopticError(
            "say what to solve for: --luminous-T, --luminous-R, --T-at, --R-at, --lab, --hex or --reading"
        )
    return conditions


def meter_reading(opts: dict):
    """The --reading as it came off the meter (sample, reference, dark, unit), or None."""
    from filmoptic.inverse.readings import parse_reading

    if opts.get("reading") is None:
        return None
    return parse_reading(opts["reading"], dark=opts.get("dark"))


#: A condition that looks at the light through the substrate (its T), by quantity or appearance.
def _looks_through(condition) -> bool:
    return (getattr(condition, "quantity", "").endswith("T") or getattr(condition, "appearance", "") == "transmitted"
            or type(condition).__name__ == "Reading")


def warn_if_half_space(stack, conditions) -> None:
    """Say once when a transmittance is solved through a transparent half-space substrate: the
    back surface of a real pane is then left out, which changes the answer."""
    from filmoptic.errors import FilmopticError
    from filmoptic.notes import warn

    substrate = stack.substrate
    if substrate.thickness_nm is not None or not any(_looks_through(c) for c in conditions):
        return
    try:
        if not stack.substrate_passes_light([400.0, 550.0, 700.0]):
            return
    except FilmopticError:
        return
    warn(f"the substrate '{substrate.text}' has no thickness, so it is a half-space: T is the light that enters "
         "it, and a real pane's back surface (which reflects some of it again) is left out, which changes the "
         f"answer; write the pane's thickness, e.g. '{substrate.text} 4mm', for the light that comes out behind it")


def condition_json(condition) -> dict:
    """A condition as plain JSON, with its human label."""
    data = to_jsonable(condition)
    data["label"] = condition.label()
    return data


def needs_eye_caution(conditions, solutions) -> bool:
    low_target = any(getattr(c, "quantity", "") == "luminous_T" and c.value < EYE_CAUTION_BELOW
                     for c in conditions)
    # An opaque part (T exactly 0: nothing comes through an absorbing half-space) is no filter.
    low_answer = any(s.companions is not None and s.companions.luminous_T is not None
                     and 0 < s.companions.luminous_T < EYE_CAUTION_BELOW for s in solutions)
    return low_target or low_answer


def _fmt_ab(ab) -> str:
    return "–" if ab is None else f"{ab[0]:+.1f},{ab[1]:+.1f}"


def _value_cells(condition, value, slope, delta_e):
    if condition.kind == "colour":
        return ["{:.1f},{:.1f},{:.1f}".format(*value), f"{delta_e:.2f}", f"{slope:.3f}"]
    return [percent(value), f"{100 * slope:+.3f}"]


def _value_headers(condition):
    if condition.kind == "colour":
        return ["L*a*b*", "ΔE00", "ΔE00/nm"]
    name = condition.label() if len(condition.label()) < 22 else condition.label().split(" (")[0]
    return [f"{name} (%)", "%/nm"]


def _volts_reader(law):
    """Solution → {"volts", "low_volts", "high_volts"} through the growth law ({} without one)."""
    if law is None:
        return lambda s: {}
    return lambda s: {"volts": float(law.volts(s.thickness_nm)), "low_volts": float(law.volts(s.low_nm)),
                      "high_volts": float(law.volts(s.high_nm))}


def print_result(result, show_companions: bool, law=None, uncertainty_text=None, meter=None) -> None:
    conditions = result.conditions
    click.echo(f"Stack: {result.stack}    unknown: {result.layer}    range {result.range_nm[0]:g}–"
               f"{result.range_nm[1]:g} nm (grid {result.step_nm:.3g} nm)")
    for c in conditions:
        extra = ""
        if getattr(c, "uncertainty", 0):
            if c.kind == "colour":
                extra = f" ± {c.uncertainty:.3g} ΔE00"
            else:
                # Points, never a bare '%': ± 0.60 % would read as a share of the value.
                how = f" (--uncertainty {str(uncertainty_text).strip()}: {describe_uncertainty(uncertainty_text)})" \
                    if uncertainty_text else ""
                extra = f" ± {percent(c.uncertainty)} percentage points{how}"
        target = "" if c.kind == "colour" else f" = {percent(c.value)} %"
        click.echo(f"Condition: {c.label()}{target}{extra}")
    if meter is not None and meter.sample is not None:
        dark = "" if meter.dark is None else f" − dark {meter.dark:g}"
        unit = f" {meter.unit}" if meter.unit else ""
        click.echo(f"Reading: (sample {meter.sample:g}{dark}) / (reference {meter.reference:g}{dark}){unit} "
                   f"= {percent(meter.ratio)} %")
    headers = ["#", "thickness (nm)", "low (nm)", "high (nm)"] + ([] if law is None else ["volts", "low V", "high V"])
    for c in conditions:
        headers += _value_headers(c)
    if len(conditions) > 1:
        headers.append("misfit")
    if show_companions:
        # The coater's words for the views (film side, glass side, through); Tv/Rv per ISO 9050.
        from filmoptic.stack import parse_stack
        from filmoptic.describe.views import back_side

        back = back_side(parse_stack(str(result.stack))).split()[0]
        headers += ["Tv %", "Rv film %", f"Rv {back} %", "A film %", "A subst %", "a*b* film", f"a*b* {back}",
                    "a*b* through"]
    rows = []
    for i, s in enumerate(result.solutions, 1):
        row = [i, f"{s.thickness_nm:.2f}", f"{s.low_nm:.2f}", f"{s.high_nm:.2f}"]
        if law is not None:
            row += [f"{float(law.volts(x)):.2f}" for x in (s.thickness_nm, s.low_nm, s.high_nm)]
        for c, v, sl in zip(conditions, s.values, s.slopes_per_nm):
            de = None
            if c.kind == "colour":
                from filmoptic.colorimetry import delta_e00

                de = float(delta_e00(v, c.lab))
            row += _value_cells(c, v, sl, de)
        if len(conditions) > 1:
            row.append(f"{s.residual:.3g}")
        if show_companions and s.companions is not None:
            cp = s.companions
            row += [percent(cp.luminous_T), percent(cp.luminous_R), percent(cp.luminous_R_reverse),
                    percent(cp.absorptance_layers), percent(cp.absorptance_substrate),
                    _fmt_ab(cp.reflected_ab), _fmt_ab(cp.reflected_reverse_ab), _fmt_ab(cp.transmitted_ab)]
        rows.append(row)
    click.echo("")
    print_table(headers, rows)
    click.echo("")
    exact = all(s.exact for s in result.solutions)
    if exact and len(result.solutions) > 1:
        click.echo("Several thicknesses meet the condition (interference orders); the thinnest is listed first.")
    elif not exact:
        click.echo("Best matches (local minima of the misfit), best first.")
    if law is not None:
        click.echo(f"Volts from the growth law {law.describe()} ({law.source}).")
    if show_companions:
        click.echo("Tv, Rv: luminous transmittance and reflectance (ISO 9050, D65); film: the coated face; "
                   "glass (back): the part turned over; A: light absorbed in the film and in the substrate "
                   "(luminous); a*b*: the CIELAB tint (D65).")


@dataclass(frozen=True)
class _Column:
    """A CSV file's rows and the readings in it; a row that cannot be read keeps its place with a
    NaN value and a note, so the good rows are still solved."""

    header: list
    rows: list            # every data row, as lists of the header's length (for the output)
    values: object        # numpy array of fractions, NaN for a bad row
    notes: dict           # row index -> "line N: '…'" (the short status of a bad row)
    reasons: dict         # row index -> the full reason, for the one-line summary
    raw: bool = False     # the readings came from raw sample/reference(/dark) columns
    how: str = ""         # how the file was read, for the user


_UNIT_IN_NAME = re.compile(r"^(?P<name>.*?)\s*[\(\[]\s*(?P<unit>[^\)\]]*?)\s*[\)\]]\s*$")


def _column_name(cell: str) -> tuple[str, str]:
    """``"sample (V)"`` → ("sample", "V"); ``"reading"`` → ("reading", "")."""
    m = _UNIT_IN_NAME.match(cell.strip())
    return (m.group("name").strip(), m.group("unit")) if m else (cell.strip(), "")


def _find_column(header_names, wanted: str, path) -> int:
    from filmoptic.errors import DataFileError

    lowered = [n.lower() for n in header_names]
    if wanted in header_names:
        return header_names.index(wanted)
    if wanted.lower() in lowered:
        return lowered.index(wanted.lower())
    raise DataFileError(f"--readings {path}: no column {wanted!r} (columns: {', '.join(header_names)})")


def _choose_columns(path, header, column, columns):
    """(indices, raw): one ratio column, or the raw sample, reference (and dark) columns."""
    from filmoptic.errors import DataFileError, FilmopticError

    names = [_column_name(h)[0] for h in header]
    if column is not None and columns is not None:
        raise FilmopticError("give either --column (a column of ratios) or --columns (raw readings), not both")
    if columns is not None:
        wanted = [c.strip() for c in str(columns).split(",")]
        if len(wanted) not in (2, 3) or not all(wanted):
            raise FilmopticError(f"--columns: name SAMPLE,REFERENCE or SAMPLE,REFERENCE,DARK, got {columns!r}")
        return [_find_column(names, w, path) for w in wanted], True
    if column is not None:
        return [_find_column(names, column, path)], False
    lowered = [n.lower() for n in names]
    if "reading" in lowered:
        return [lowered.index("reading")], False
    if "sample" in lowered and "reference" in lowered:
        found = [lowered.index("sample"), lowered.index("reference")]
        if "dark" in lowered:
            found.append(lowered.index("dark"))
        return found, True
    raise DataFileError(
        f"--readings {path}: no 'reading' column, nor 'sample' and 'reference' columns; name the column with "
        f"--column, or the raw columns with --columns SAMPLE,REFERENCE[,DARK] (columns: {', '.join(header)})"
    )


def _with_unit(cell: str, unit: str) -> str:
    """A bare number takes the unit written in its column's header."""
    text = cell.strip()
    return f"{text}{unit}" if unit and re.fullmatch(r"[+-]?(?:\d+\.?\d*|\.\d+)(?:[eE][+-]?\d+)?", text) else text


def _read_column(path: Path, column: str | None, columns: str | None = None, dark: str | None = None) -> _Column:
    """Rows of a CSV file, and the readings in it (as fractions): one column of ratios (``--column``,
    default 'reading'), or raw readings in sample and reference columns, with an optional dark
    column (``--columns``, default 'sample', 'reference', 'dark').

    A whole-file problem (unreadable file, no header, no such column, no usable row) raises; a bad
    row does not.
    """
    import csv

    import numpy as np

    from filmoptic.errors import DataFileError, FilmopticError
    from filmoptic.inverse.readings import parse_reading

    from filmoptic.files import check_row_count, guard_input

    guard_input(path, "--readings")
    try:
        with open(path, newline="", encoding="utf-8-sig") as fh:
            sample = fh.read(4096)
            fh.seek(0)
            try:
                dialect = csv.Sniffer().sniff(sample, delimiters=",;\t")
            except csv.Error:
                dialect = csv.excel
            reader = csv.reader(fh, dialect)
            # line_num after each row is the file line where that row ends (for messages).
            numbered = [(reader.line_num, row) for row in reader]
    except FileNotFoundError:
        raise DataFileError(f"--readings {path}: no such file") from None
    except (OSError, UnicodeDecodeError) as exc:
        raise DataFileError(f"--readings {path}: cannot read it ({exc.__class__.__name__})") from None
    except csv.Error as exc:
        raise DataFileError(f"--readings {path}: not a readable CSV file ({exc})") from None
    blank = sum(1 for _, r in numbered if not any(cell.strip() for cell in r))
    numbered = [(line, r) for line, r in numbered if any(cell.strip() for cell in r)]
    check_row_count(len(numbered), f"--readings {path}")
    if len(numbered) < 2:
        raise DataFileError(f"--readings {path}: needs a header line and at least one row of readings")
    header_line, header = numbered[0][0], [h.strip() for h in numbered[0][1]]
    chosen, raw = _choose_columns(path, header, column, columns)
    units = [_column_name(header[i])[1] for i in chosen]
    separator = getattr(dialect, "delimiter", ",")
    # Semicolon- and tab-separated exports from European locales write 0,304 for 0.304.
    decimal_comma = separator in ";\t" and any(
        re.fullmatch(r"\s*[+-]?\d+,\d+\s*[A-Za-zµμ%]*\s*", row[i]) for _, row in numbered[1:] for i in chosen if i < len(row)
    )
    width = len(header)
    separators = {",": "commas", ";": "semicolons", "\t": "tabs"}
    blank_text = f"; {blank} blank line{'s' if blank != 1 else ''} skipped" if blank else ""
    fast = None if (raw or decimal_comma) else _plain_fractions(numbered[1:], chosen[0], width)
    if fast is not None:
        # The usual file, read in one vectorised pass: every row a plain fraction.
        how = (f"{separators.get(separator, repr(separator))} between fields, decimal point; header on "
               f"line {header_line}; ratios in column {header[chosen[0]]} (fractions; no unit); "
               f"{fast.size} row{'s' if fast.size != 1 else ''}{blank_text}")
        return _Column(header, [row for _, row in numbered[1:]], fast, {}, {}, False, how)
    rows, values, notes, reasons, units_seen = [], [], {}, {}, set()
    for index, (line, row) in enumerate(numbered[1:]):
        value = math.nan
        if len(row) != width:
            fields = f"{len(row)} field{'s' if len(row) != 1 else ''}, the header has {width}"
            notes[index] = f"line {line}: {fields}"
            reasons[index] = notes[index]
        else:
            cells = [row[i].replace(",", ".") if decimal_comma else row[i] for i in chosen]
            text = "/".join(_with_unit(c, u) for c, u in zip(cells, units)) if raw else cells[0]
            try:
                if raw and not all(c.strip() for c in cells):
                    raise FilmopticError("an empty cell")
                meter = parse_reading(text, dark=dark if (dark is not None and len(chosen) < 3) else None)
                value = meter.ratio
                units_seen.add(meter.unit)
            except FilmopticError as exc:
                notes[index] = f"line {line}: {' / '.join(repr(c.strip()) for c in cells)}" if raw else \
                    f"line {line}: {row[chosen[0]].strip()!r}"
                # parse_reading speaks of the --reading option; here the value came from a cell.
                reasons[index] = f"line {line}: " + re.sub(r"^--reading:?\s*", "", str(exc))
        # The output keeps the header's columns so that the added ones line up.
        rows.append((row + [""] * width)[:width])
        values.append(value)
    named = ", ".join(header[i] for i in chosen)
    if len(notes) == len(rows):
        first = reasons[0]
        raise DataFileError(
            f"--readings {path}: no usable reading in column{'s' if raw else ''} {named} ({len(rows)} "
            f"row{'s' if len(rows) != 1 else ''}; first problem: {first})"
        )
    unit_text = ", ".join(sorted(u or "no unit" for u in units_seen))
    if raw:
        roles = ["sample", "reference", "dark"][: len(chosen)]
        used = ", ".join(f"{r} = {header[i]}" for r, i in zip(roles, chosen))
        dark_text = "" if len(chosen) == 3 else (f"; dark {dark} (--dark) from every row" if dark is not None else "; no dark reading")
        what = f"raw readings ({used}{dark_text}; unit {unit_text}), ratio (sample − dark)/(reference − dark)"
    else:
        what = f"ratios in column {named} (fractions, percent or SAMPLE/REFERENCE per cell; unit {unit_text})"
    dropped = ""
    if notes:
        first = reasons[min(reasons)]
        dropped = f", {len(notes)} unusable (first: {' '.join(first.split())})"
    how = (f"{separators.get(separator, repr(separator))} between fields, decimal "
           f"{'comma' if decimal_comma else 'point'}; header on line {header_line}; {what}; "
           f"{len(rows)} row{'s' if len(rows) != 1 else ''}{dropped}{blank_text}")
    return _Column(header, rows, np.asarray(values, dtype=float), notes, reasons, raw, how)


def _plain_fractions(numbered, col, width):
    """The column as an array when every row is complete and its reading a plain fraction in
    [0, 1] (the usual file, read in one vectorised pass), else None (read row by row)."""
    import numpy as np

    if any(len(row) != width for _, row in numbered):
        return None
    try:
        values = np.array([row[col] for _, row in numbered], dtype=float)
    except ValueError:
        return None
    if not np.all(np.isfinite(values) & (values >= 0) & (values <= 1)):
        return None
    return values


def _spread(result, good):
    """A BatchResult of the good rows spread over every row (NaN, 0 and "bad" elsewhere)."""
    import numpy as np

    from dataclasses import replace

    n = good.size

    def full(values, fill, dtype=float):
        out = np.full(n, fill, dtype=dtype)
        out[good] = values
        return out

    return replace(
        result,
        thickness_nm=full(result.thickness_nm, np.nan), low_nm=full(result.low_nm, np.nan),
        high_nm=full(result.high_nm, np.nan), value=full(result.value, np.nan),
        slope_per_nm=full(result.slope_per_nm, np.nan), solutions=full(result.solutions, 0, int),
        status=full(result.status, "bad", object), closest_value=full(result.closest_value, np.nan),
        closest_nm=full(result.closest_nm, np.nan),
    )


def _run_batch(stack_text, opts, readings_path, column, columns, out, as_json, common):
    import csv
    import io

    import numpy as np

    from filmoptic.errors import FilmopticError
    from filmoptic.notes import note_file
    from filmoptic.inverse.solve import solve_batch
    from filmoptic.stack import parse_stack

    conditions = build_conditions({**opts, "reading": None, "uncertainty": None, "dark": None}, need_value=False)
    if len(conditions) != 1 or conditions[0].kind != "scalar":
        raise FilmopticError("--readings takes a column of readings alone: drop the other targets")
    spec = uncertainty_spec(opts.get("uncertainty"))
    table = _read_column(Path(readings_path), column, columns, opts.get("dark"))
    header, rows = table.header, table.rows
    added = ["thickness_nm", "low_nm", "high_nm", "solutions", "status"]
    if table.raw:
        added = ["ratio", *added]
    clash = [a for a in added if a in header]
    if clash:
        raise FilmopticError(f"--readings: the file already has column(s) {', '.join(clash)}; rename them")
    relative = spec is not None and spec[1] == "relative"
    u = 0.0 if spec is None else spec[0]
    note_file(readings_path, table.how)
    warn_if_half_space(parse_stack(stack_text, ambient=common.get("ambient", "air")), conditions)
    from filmoptic.cli._common import progress
    from filmoptic.inverse.solve import BATCH_STEPS

    good = np.isfinite(table.values)
    with progress(BATCH_STEPS, f"solving {int(good.sum())} readings") as advance:
        solved = solve_batch(stack_text, conditions[0], table.values[good], uncertainty=u,
                             relative_uncertainty=relative, advance=advance, **common)
    result = _spread(solved, good)

    def cell(x):
        return "" if not np.isfinite(x) else f"{x:.4f}"

    def status(i):
        if result.status[i] == "bad":
            return f"bad reading ({table.notes[i]})"
        if result.status[i] == "unreachable":
            return f"unreachable (closest {100 * result.closest_value[i]:.2f} % at {result.closest_nm[i]:.1f} nm)"
        if result.status[i] == "several":
            return f"several ({result.solutions[i]}; thinnest given)"
        return "ok"

    def write(fh):
        writer = csv.writer(fh, lineterminator="\n")
        writer.writerow(header + added)
        for i, row in enumerate(rows):
            ratio = [cell(table.values[i])] if table.raw else []
            writer.writerow(row + ratio + [cell(result.thickness_nm[i]), cell(result.low_nm[i]),
                                           cell(result.high_nm[i]), int(result.solutions[i]), status(i)])

    counts = {k: int(np.sum(result.status == k)) for k in ("ok", "several", "unreachable", "bad")}
    if out is not None:
        write_atomically(out, write)
        if as_json:
            emit_json({"rows": len(rows), "out": str(out), "counts": counts,
                       "range_nm": result.range_nm, "step_nm": result.step_nm,
                       "condition": condition_json(conditions[0]), "read_as": table.how,
                       "uncertainty_kind": None if spec is None else spec[1]})
        else:
            bad = f", {counts['bad']} bad reading{'s' if counts['bad'] != 1 else ''}" if counts["bad"] else ""
            click.echo(f"{len(rows)} rows: {counts['ok']} ok, {counts['several']} with several solutions "
                       f"(thinnest given), {counts['unreachable']} unreachable{bad} → {out}")
    elif as_json:
        emit_json({"condition": condition_json(conditions[0]), "range_nm": result.range_nm, "read_as": table.how,
                   "uncertainty_kind": None if spec is None else spec[1],
                   "rows": [{"ratio": table.values[i], "thickness_nm": result.thickness_nm[i], "low_nm": result.low_nm[i],
                             "high_nm": result.high_nm[i], "solutions": int(result.solutions[i]),
                             "status": "bad reading" if result.status[i] == "bad" else str(result.status[i]),
                             **({"problem": table.reasons[i]} if i in table.reasons else {})}
                            for i in range(len(rows))]})
    else:
        buffer = io.StringIO()
        write(buffer)
        click.echo(buffer.getvalue(), nl=False)
    if table.notes:
        # One line on stderr once the output is complete, so that --json output stays clean.
        first = table.reasons[min(table.reasons)]
        verb = "rows have" if counts["bad"] != 1 else "rows has"
        click.echo(f"filmoptic: warning: {counts['bad']} of {len(rows)} {verb} a bad reading, marked "
                   f"'bad reading' in the status column (first: {' '.join(first.split())})", err=True)


@click.command()
@click.argument("stack")
@condition_options
@click.option("--range", "range_text", metavar="START:STOP",
              help="Thicknesses to search, nm. Default: 0:100 for a metal layer, 0:500 otherwise "
                   "(or the layer's own LOW..HIGH).")
@click.option("--step", type=FiniteFloatRange(min=1e-4, max=50), metavar="NM",
              help="Grid step, nm (default: fine enough for the layer's index; the smaller of 1 nm and λ_min/(32·n_max), so no fringe is missed).")
@click.option("--readings", "readings_path", type=click.Path(dir_okay=False, path_type=Path), metavar="FILE",
              help="A CSV file with one part per row: solve every reading in a column of ratios (see --column) "
                   "or in raw columns of sample and reference readings, optionally dark (see --columns), and "
                   "write a CSV with the thicknesses (see --out). --source, --detector, --reference, --dark and "
                   "--uncertainty apply to every row. A row whose reading cannot be read is marked "
                   "'bad reading (line N: …)' in the status column; the other rows are still solved. How the "
                   "file was read (separator, decimal mark, columns, units, rows dropped) is said on stderr.")
@click.option("--column", metavar="NAME", help="Column of --readings holding the ratios (default 'reading').")
@click.option("--columns", "columns", metavar="SAMPLE,REFERENCE[,DARK]",
              help="Columns of --readings holding the raw readings (default: 'sample', 'reference' and, if "
                   "present, 'dark', used when there is no 'reading' column). Cells may carry units (2.3V), "
                   "or the header may (sample (V)).")
@click.option("--out", type=click.Path(dir_okay=False, path_type=Path), metavar="FILE",
              help="Where --readings writes its CSV: the input columns plus thickness_nm, low_nm, high_nm, "
                   "solutions and status (and ratio, for raw readings) (default: standard output).")
@click.option("--plot", "plot_path", metavar="FILE",
              help="Draw the modelled quantity against the thickness, with the target or reading, its "
                   "uncertainty band and every solution's interval, into FILE (.png, .svg or .pdf).")
@click.option("--volts", "volts_text", metavar="START:STOP",
              help="Search anodising voltages instead of --range (with --anodize METAL or --nm-per-volt).")
@law_options
@angle_option
@ambient_option
@extrapolate_option
@json_option
def solve(stack, range_text, step, readings_path, column, columns, out, plot_path, volts_text, law_metal, nm_per_volt,
          offset_nm, angle, ambient, extrapolate, as_json, **opts):
    """Find the thickness that meets a target or explains a reading.

    STACK has exactly one unknown thickness written '?', for example "Ti ? / glass 4mm". Give one
    condition, or several (solved together in the least-squares sense):

    \b
    Design targets
      --luminous-T 30%          luminous transmittance (ISO 9050, D65)
      --luminous-R 20%          luminous reflectance (--side reverse: substrate side)
      --T-at 550=40%            transmittance at one wavelength; --R-at likewise
      --lab 60,2,-25            a colour, nearest by ΔE00 (--appearance reflected|transmitted)
      --hex "#8090c0"           the same from an sRGB colour

    \b
    Measurements
      --reading 318/1045        a transmittance reading (or 0.304, or 30.4%)
      --reading 2.3V/7.1V       raw readings with units; a third number is the dark reading
      --dark 0.02V              the dark reading, subtracted from both
      --source A                the light: illuminant name, laser:633, led:530/30 or a file
      --detector photopic       photopic (lux meter), flat (power meter), silicon (photodiode)
                                or a response file
      --reference open          relative to the open beam, or 'bare' (an uncoated piece)

    \b
    Uncertainty
      --uncertainty 2%          2 percent of the value (a 30 % target: ±0.6 points)
      --uncertainty 2pp         2 percentage points (a 30 % target: 28–32 %)
      --uncertainty 0.02        in the condition's own unit (a fraction; ΔE00 for colours)

    Every thickness in the range that meets the condition is listed, thinnest first: a transparent
    layer meets a target again every half wave (λ/2n) of thickness. Each solution shows its interval
    from --uncertainty, the achieved value and the slope (change per nm), so you can see how
    tightly the thickness must be held. A colour target lists the best matches with their ΔE00 (with
    --uncertainty, only those within it, and the interval where ΔE00 stays within it). For a metal
    layer the table adds what a semi-mirror buyer asks: luminous R from both sides, the light
    absorbed in the layers and in the substrate (a glass plate's own absorption, or all that enters
    a metal or silicon half-space, where T is 0), and the tints.

    If the condition cannot be met in the range the command says so, names the closest reachable
    value and where, and exits with status 2.

    A column of readings (one part per row of a CSV file) is solved in one pass, from a column of
    ratios or from the raw sample and reference (and dark) columns:

    \b
        filmoptic solve "Ti ? / glass 4mm" --readings parts.csv \\
            --column lux_ratio --source A --out thick.csv
        filmoptic solve "Ti ? / glass 4mm" --readings raw.csv \\
            --columns sample,reference,dark --detector silicon --source led:530

    A substrate written without a thickness ('glass') is a half-space: only its front surface
    counts. For a transmittance that changes the answer (a real pane's back surface is left out),
    and the command says so; write the pane's thickness ('glass 4mm').

    --plot draws the modelled value against the thickness, with the target or reading, its
    uncertainty band and every solution's interval.

    For an anodised layer, --anodize METAL (Ti, Nb, Ta, Al, Zr; or your own --nm-per-volt and
    --offset-nm) reads every solution in volts as well (thickness = nm-per-volt × volts + offset),
    and --volts START:STOP searches that span of voltages instead of --range:

    \b
        filmoptic solve "TiO2 ? / Ti" --hex "#3d64ab" --anodize Ti --volts 0:100

    Computed values are no substitute for certified measurement; a computed filter is no eye
    protection for sun, welding or laser viewing.
    """
    from filmoptic.errors import FilmopticError, TargetError
    from filmoptic.inverse.solve import solve_thickness
    from filmoptic.stack import parse_stack
    from filmoptic.units import parse_range_nm

    with user_errors():
        range_nm = None if range_text is None else parse_range_nm(range_text)[:2]
        law = law_from_options(law_metal, nm_per_volt, offset_nm)
        span = volts_from_option(volts_text, range_text, law, need_step=False)
        if span is not None:
            range_nm = tuple(float(x) for x in law.thickness_nm(span))
        if law is not None and readings_path is not None:
            raise FilmopticError("--anodize/--nm-per-volt read single solutions in volts; leave them out with --readings")
        if plot_path is not None:
            if readings_path is not None:
                raise FilmopticError("--plot draws one solve; leave it out with --readings FILE")
            check_plot_path(plot_path)
        common = dict(range_nm=range_nm, step_nm=step, angle_deg=angle, extrapolate=extrapolate, ambient=ambient)
        if readings_path is not None:
            if opts.get("reading") is not None:
                raise FilmopticError("give either --reading or --readings FILE, not both")
            _run_batch(stack, opts, readings_path, column, columns, out, as_json, common)
            return
        if column is not None or columns is not None or out is not None:
            raise FilmopticError("--column, --columns and --out belong to --readings FILE")
        conditions = build_conditions(opts)
        meter = meter_reading(opts)
        parsed = parse_stack(stack, ambient=ambient)
        result = solve_thickness(parsed, conditions, **common)
    if not result.met:
        # A user error is one line on stderr: no caution before it (nothing was computed to trust).
        raise TargetError(result.message)
    if plot_path is not None:
        from filmoptic.plots.solve import plot_solve

        with user_errors():
            save_plot(plot_solve(result, angle_deg=angle, extrapolate=extrapolate, ambient=ambient), plot_path)
    warn_if_half_space(parsed, conditions)
    if needs_eye_caution(conditions, result.solutions):
        echo_caution(EYE_CAUTION)
    volts_of = _volts_reader(law)
    warn_thin_metal(parsed, [s.thickness_nm for s in result.solutions])
    u_text = opts.get("uncertainty")
    if as_json:
        if plot_path is not None:
            from filmoptic.notes import note

            note(f"plot written to {plot_path}")
        emit_json({
            **({} if law is None else {"nm_per_volt": law.nm_per_volt, "offset_nm": law.offset_nm,
                                       "law_source": law.source}),
            "stack": result.stack,
            "surface_oxides": list(parsed.surface_oxides()),
            "layer": result.layer,
            "condition": condition_json(conditions[0]),
            "conditions": [condition_json(c) for c in conditions],
            "uncertainty_kind": None if u_text is None else uncertainty_spec(u_text, _all_colour(conditions))[1],
            **({} if meter is None else {"reading": to_jsonable(meter)}),
            "range_nm": result.range_nm,
            "step_nm": result.step_nm,
            "message": result.message,
            "solutions": [{**to_jsonable(s), **volts_of(s)} for s in result.solutions],
            **({} if plot_path is None else {"plot": str(plot_path)}),
        })
        return
    print_result(result, show_companions=_free_layer_kind(parsed) == "metal", law=law,
                 uncertainty_text=None if _all_colour(conditions) else u_text, meter=meter)
    echo_surface_oxides(parsed)
    if plot_path is not None:
        click.echo(f"Plot written to {plot_path} (the modelled value against thickness, with the solutions).")


def _all_colour(conditions) -> bool:
    return all(c.kind == "colour" for c in conditions)


def _free_layer_kind(stack) -> str:
    param = stack.parameters[stack.thickness_parameters[0]]
    return getattr(stack.layers[param.layer].material, "kind", "")
