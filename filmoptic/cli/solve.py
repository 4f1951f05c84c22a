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
    ambient_option,
    angle_option,
    echo_caution,
    emit_json,
    extrapolate_option,
    json_option,
    percent,
    print_table,
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
                      "two raw readings SAMPLE/REFERENCE (318/1045)."),
    click.option("--source", default="D65", show_default=True, metavar="LIGHT",
                 help="Light of the reading: an illuminant (A for a halogen lamp, D65, …), laser:WL for a "
                      "laser line, led:WL/FWHM for an LED (Gaussian), or a two-column spectrum file."),
    click.option("--detector", default="photopic", show_default=True, metavar="SENSOR",
                 help="photopic (a lux meter), flat (a power meter or thermal sensor) or a two-column "
                      "response file."),
    click.option("--reference", type=click.Choice(["open", "bare"]), default="open", show_default=True,
                 help="The reading is relative to the open beam, or to an uncoated piece of the same substrate."),
    click.option("--uncertainty", metavar="U",
                 help="Uncertainty of every condition, in its own unit (a fraction for values, ΔE00 for "
                      "colours), or N% of the value. Turns each solution into an interval."),
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


def build_conditions(opts: dict, need_value: bool = True) -> list:
    """Turn the shared options into Target/ColourTarget/Reading conditions (in a fixed order).

    With ``need_value=False`` a reading condition is built even without ``--reading`` (for a
    column of readings, whose values come from a file).
    """
    from filmoptic.errors import FilmopticError
    from filmoptic.readings import band_weights, parse_reading
    from filmoptic.solve import ColourTarget, Reading, Target, lab_from_hex, parse_lab, parse_uncertainty
    from filmoptic.units import parse_fraction

    u_text = opts.get("uncertainty")

    def unc(value, colour=False):
        if u_text is None:
            return 0.0
        if colour and str(u_text).strip().endswith("%"):
            raise FilmopticError("--uncertainty for a colour is a ΔE00 value, not a percentage")
        return parse_uncertainty(u_text, value)

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
                                                          ("reference", "open"))
                       if _given(name, opts.get(name, default) != default)]
    if opts.get("reading") is None and need_value and reading_options:
        one = len(reading_options) == 1
        names = " and ".join([", ".join(reading_options[:-1]), reading_options[-1]] if not one else reading_options)
        raise FilmopticError(
            f"{names} describe{'s' if one else ''} a measured reading: add --reading VALUE, or drop "
            f"{'it' if one else 'them'}"
        )
    if opts.get("reading") is not None or not need_value:
        # Validate the source and detector now so that a typo is reported before any work.
        band_weights(opts.get("source", "D65"), opts.get("detector", "photopic"))
        v = parse_reading(opts["reading"]) if opts.get("reading") is not None else 0.0
        conditions.append(Reading(v, opts.get("source", "D65"), opts.get("detector", "photopic"),
                                  opts.get("reference", "open"), unc(v)))
    if not conditions:
        raise FilmopticError(
            "say what to solve for: --luminous-T, --luminous-R, --T-at, --R-at, --lab, --hex or --reading"
        )
    return conditions


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


def print_result(result, show_companions: bool, law=None) -> None:
    conditions = result.conditions
    click.echo(f"Stack: {result.stack}    unknown: {result.layer}    range {result.range_nm[0]:g}–"
               f"{result.range_nm[1]:g} nm (grid {result.step_nm:.3g} nm)")
    for c in conditions:
        extra = ""
        if getattr(c, "uncertainty", 0):
            extra = f" ± {c.uncertainty:.3g}" if c.kind == "colour" else f" ± {percent(c.uncertainty)} %"
        target = "" if c.kind == "colour" else f" = {percent(c.value)} %"
        click.echo(f"Condition: {c.label()}{target}{extra}")
    headers = ["#", "thickness (nm)", "low (nm)", "high (nm)"] + ([] if law is None else ["volts", "low V", "high V"])
    for c in conditions:
        headers += _value_headers(c)
    if len(conditions) > 1:
        headers.append("misfit")
    if show_companions:
        # The coater's words for the views (film side, glass side, through); Tv/Rv per ISO 9050.
        from filmoptic.stack import parse_stack
        from filmoptic.views import back_side

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
    """A CSV file's rows and one column of readings; a row that cannot be read keeps its place
    with a NaN value and a note, so the good rows are still solved."""

    header: list
    rows: list            # every data row, as lists of the header's length (for the output)
    values: object        # numpy array of fractions, NaN for a bad row
    notes: dict           # row index -> "line N: '…'" (the short status of a bad row)
    reasons: dict         # row index -> the full reason, for the one-line summary


def _read_column(path: Path, column: str | None) -> _Column:
    """Rows of a CSV file, and the readings in one column (as fractions).

    A whole-file problem (unreadable file, no header, no such column, no usable row) raises; a bad
    row does not.
    """
    import csv

    import numpy as np

    from filmoptic.errors import DataFileError, FilmopticError
    from filmoptic.readings import parse_reading

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
    numbered = [(line, r) for line, r in numbered if any(cell.strip() for cell in r)]
    if len(numbered) < 2:
        raise DataFileError(f"--readings {path}: needs a header line and at least one row of readings")
    header = [h.strip() for h in numbered[0][1]]
    if column is None:
        column = "reading" if "reading" in header else None
        if column is None:
            raise DataFileError(
                f"--readings {path}: no 'reading' column; name the column with --column (columns: {', '.join(header)})"
            )
    if column not in header:
        raise DataFileError(f"--readings {path}: no column {column!r} (columns: {', '.join(header)})")
    col = header.index(column)
    width = len(header)
    rows, values, notes, reasons = [], [], {}, {}
    for index, (line, row) in enumerate(numbered[1:]):
        value = math.nan
        if len(row) != width:
            fields = f"{len(row)} field{'s' if len(row) != 1 else ''}, the header has {width}"
            notes[index] = f"line {line}: {fields}"
            reasons[index] = notes[index]
        else:
            try:
                value = parse_reading(row[col])
            except FilmopticError as exc:
                notes[index] = f"line {line}: {row[col].strip()!r}"
                # parse_reading speaks of the --reading option; here the value came from a cell.
                reasons[index] = f"line {line}: " + re.sub(r"^--reading:?\s*", "", str(exc))
        # The output keeps the header's columns so that the added ones line up.
        rows.append((row + [""] * width)[:width])
        values.append(value)
    if len(notes) == len(rows):
        first = reasons[0]
        raise DataFileError(
            f"--readings {path}: no usable reading in column {column!r} ({len(rows)} "
            f"row{'s' if len(rows) != 1 else ''}; first problem: {first})"
        )
    return _Column(header, rows, np.asarray(values, dtype=float), notes, reasons)


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


def _run_batch(stack_text, opts, readings_path, column, out, as_json, common):
    import csv
    import io

    import numpy as np

    from filmoptic.errors import FilmopticError
    from filmoptic.solve import parse_uncertainty, solve_batch

    conditions = build_conditions({**opts, "reading": None, "uncertainty": None}, need_value=False)
    if len(conditions) != 1 or conditions[0].kind != "scalar":
        raise FilmopticError("--readings takes a column of readings alone: drop the other targets")
    if out is not None and Path(out).resolve() == Path(readings_path).resolve():
        raise FilmopticError("--out must not be the readings file itself (input files are never written)")
    table = _read_column(Path(readings_path), column)
    header, rows = table.header, table.rows
    added = ["thickness_nm", "low_nm", "high_nm", "solutions", "status"]
    clash = [a for a in added if a in header]
    if clash:
        raise FilmopticError(f"--readings: the file already has column(s) {', '.join(clash)}; rename them")
    u_text = opts.get("uncertainty")
    relative = u_text is not None and str(u_text).strip().endswith("%")
    u = 0.0 if u_text is None else (parse_uncertainty(u_text, 1.0) if relative else parse_uncertainty(u_text))
    from filmoptic.cli._common import progress
    from filmoptic.solve import BATCH_STEPS

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
            writer.writerow(row + [cell(result.thickness_nm[i]), cell(result.low_nm[i]), cell(result.high_nm[i]),
                                   int(result.solutions[i]), status(i)])

    counts = {k: int(np.sum(result.status == k)) for k in ("ok", "several", "unreachable", "bad")}
    if out is not None:
        write_atomically(out, write)
        if as_json:
            emit_json({"rows": len(rows), "out": str(out), "counts": counts,
                       "range_nm": result.range_nm, "step_nm": result.step_nm,
                       "condition": condition_json(conditions[0])})
        else:
            bad = f", {counts['bad']} bad reading{'s' if counts['bad'] != 1 else ''}" if counts["bad"] else ""
            click.echo(f"{len(rows)} rows: {counts['ok']} ok, {counts['several']} with several solutions "
                       f"(thinnest given), {counts['unreachable']} unreachable{bad} → {out}")
    elif as_json:
        emit_json({"condition": condition_json(conditions[0]), "range_nm": result.range_nm,
                   "rows": [{"thickness_nm": result.thickness_nm[i], "low_nm": result.low_nm[i],
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
@click.option("--step", type=click.FloatRange(min=1e-4, max=50), metavar="NM",
              help="Grid step, nm (default: fine enough for the layer's index; the smaller of 1 nm and λ_min/(32·n_max), so no fringe is missed).")
@click.option("--readings", "readings_path", type=click.Path(dir_okay=False, path_type=Path), metavar="FILE",
              help="A CSV file with one part per row: solve every reading in a column (see --column) and "
                   "write a CSV with the thicknesses (see --out). --source, --detector, --reference and "
                   "--uncertainty apply to every row. A row whose reading cannot be read is marked "
                   "'bad reading (line N: …)' in the status column; the other rows are still solved.")
@click.option("--column", metavar="NAME", help="Column of --readings holding the readings (default 'reading').")
@click.option("--out", type=click.Path(dir_okay=False, path_type=Path), metavar="FILE",
              help="Where --readings writes its CSV: the input columns plus thickness_nm, low_nm, high_nm, "
                   "solutions and status (default: standard output).")
@click.option("--volts", "volts_text", metavar="START:STOP",
              help="Search anodising voltages instead of --range (with --anodize METAL or --nm-per-volt).")
@law_options
@angle_option
@ambient_option
@extrapolate_option
@json_option
def solve(stack, range_text, step, readings_path, column, out, volts_text, law_metal, nm_per_volt, offset_nm,
          angle, ambient, extrapolate, as_json, **opts):
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
      --source A                the light: illuminant name, laser:633, led:530/30 or a file
      --detector photopic       photopic (lux meter), flat (power meter) or a response file
      --reference open          relative to the open beam, or 'bare' (an uncoated piece)

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

    A column of readings (one part per row of a CSV file) is solved in one pass:

    \b
        filmoptic solve "Ti ? / glass 4mm" --readings parts.csv \\
            --column lux_ratio --source A --out thick.csv

    For an anodised layer, --anodize METAL (Ti, Nb, Ta, Al, Zr; or your own --nm-per-volt and
    --offset-nm) reads every solution in volts as well (thickness = nm-per-volt × volts + offset),
    and --volts START:STOP searches that span of voltages instead of --range:

    \b
        filmoptic solve "TiO2 ? / Ti" --hex "#3d64ab" --anodize Ti --volts 0:100

    Computed values are no substitute for certified measurement; a computed filter is no eye
    protection for sun, welding or laser viewing.
    """
    from filmoptic.errors import FilmopticError, TargetError
    from filmoptic.solve import solve_thickness
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
        common = dict(range_nm=range_nm, step_nm=step, angle_deg=angle, extrapolate=extrapolate, ambient=ambient)
        if readings_path is not None:
            if opts.get("reading") is not None:
                raise FilmopticError("give either --reading or --readings FILE, not both")
            _run_batch(stack, opts, readings_path, column, out, as_json, common)
            return
        if column is not None or out is not None:
            raise FilmopticError("--column and --out belong to --readings FILE")
        conditions = build_conditions(opts)
        parsed = parse_stack(stack, ambient=ambient)
        result = solve_thickness(parsed, conditions, **common)
    if not result.met:
        # A user error is one line on stderr: no caution before it (nothing was computed to trust).
        raise TargetError(result.message)
    if needs_eye_caution(conditions, result.solutions):
        echo_caution(EYE_CAUTION)
    volts_of = _volts_reader(law)
    warn_thin_metal(parsed, [s.thickness_nm for s in result.solutions])
    if as_json:
        emit_json({
            **({} if law is None else {"nm_per_volt": law.nm_per_volt, "offset_nm": law.offset_nm,
                                       "law_source": law.source}),
            "stack": result.stack,
            "surface_oxides": list(parsed.surface_oxides()),
            "layer": result.layer,
            "condition": condition_json(conditions[0]),
            "conditions": [condition_json(c) for c in conditions],
            "range_nm": result.range_nm,
            "step_nm": result.step_nm,
            "message": result.message,
            "solutions": [{**to_jsonable(s), **volts_of(s)} for s in result.solutions],
        })
        return
    print_result(result, show_companions=_free_layer_kind(parsed) == "metal", law=law)
    echo_surface_oxides(parsed)


def _free_layer_kind(stack) -> str:
    param = stack.parameters[stack.thickness_parameters[0]]
    return getattr(stack.layers[param.layer].material, "kind", "")
