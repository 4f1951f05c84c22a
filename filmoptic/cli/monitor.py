"""``filmoptic monitor``: thickness, rate and time to stop from a live light signal."""

from __future__ import annotations

import sys

import click

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
    user_errors,
)

__all__ = ["monitor"]

#: Shown once when --on-target drives hardware.
ON_TARGET_CAUTION = (
    "--on-target runs your command when the computed target is reached; filmoptic is no interlock. "
    "Keep the coater's own shutter, power and vacuum interlocks in charge, try the command with the "
    "source off first, and follow your equipment's instructions and local codes."
)
#: Longest wait for the --on-target command, seconds.
ON_TARGET_TIMEOUT_S = 60.0
#: Exit codes besides 0 (target reached) and 2 (a mistake in the command).
EXIT_NOT_REACHED = 3
EXIT_COMMAND_FAILED = 4
EXIT_INTERRUPTED = 130


def _duration(text, what, allow_zero=False):
    import re

    from filmoptic.units import parse_duration_s

    if text is None:
        return None
    if allow_zero and re.fullmatch(r"\s*0*\.?0*\s*(s|sec|min|h)?\s*", str(text)) and re.search(r"0", str(text)):
        return 0.0
    return parse_duration_s(text, what)


def _conditions(luminous_t, luminous_r, t_at, r_at, illuminant, side):
    from filmoptic.cli.solve import _wl_value
    from filmoptic.inverse.solve import Target
    from filmoptic.units import parse_fraction

    conditions = []
    if luminous_t is not None:
        conditions.append(Target("luminous_T", parse_fraction(luminous_t, what="--luminous-T"), side=side,
                                 illuminant=illuminant))
    if luminous_r is not None:
        conditions.append(Target("luminous_R", parse_fraction(luminous_r, what="--luminous-R"), side=side,
                                 illuminant=illuminant))
    for text in t_at:
        wl, v = _wl_value(text, "--T-at")
        conditions.append(Target("T", v, wavelength_nm=wl, side=side))
    for text in r_at:
        wl, v = _wl_value(text, "--R-at")
        conditions.append(Target("R", v, wavelength_nm=wl, side=side))
    return conditions


def _dark(text):
    from filmoptic.errors import FilmopticError
    from filmoptic.units import parse_number

    if text is None:
        return 0.0, 0.0
    parts = [p for p in str(text).split(",")]
    if len(parts) > 2:
        raise FilmopticError(f"--dark: write the dark reading, or SIGNAL,REFERENCE for both detectors, got {text!r}")
    values = [parse_number(p, "--dark") for p in parts]
    return values[0], values[1] if len(values) == 2 else 0.0


def _raw(value, reference) -> str:
    """A raw reading with as many decimals as the reference's size suggests (5 significant digits)."""
    import math

    decimals = max(0, 4 - int(math.floor(math.log10(abs(reference))))) if reference else 4
    return f"{value:.{decimals}f}"


def _fmt_time(seconds) -> str:
    if seconds is None:
        return "–"
    if seconds >= 3600:
        return f"{seconds / 3600:.1f} h"
    if seconds >= 90:
        minutes, secs = divmod(seconds, 60)
        return f"{int(minutes)} min {secs:02.0f} s"
    return f"{seconds:.1f} s"


def _bar(fraction, width=20) -> str:
    fraction = min(max(fraction, 0.0), 1.0)
    filled = int(round(fraction * width))
    return "[" + "#" * filled + "." * (width - filled) + "]"


class _Display:
    """What the operator sees: one live status line on a terminal, a line per reading otherwise,
    or JSON lines."""

    def __init__(self, as_json, plan):
        self.as_json = as_json
        self.tty = sys.stdout.isatty() and not as_json
        self.plan = plan
        self.header_done = False
        self.width = 0

    def _clear(self):
        if self.tty and self.width:
            click.echo("\r" + " " * self.width + "\r", nl=False)
            self.width = 0

    def message(self, text):
        if self.as_json:
            return
        self._clear()
        click.echo(f"  » {text}")

    def estimate(self, e):
        import json

        if self.as_json:
            click.echo(json.dumps(e.as_json(), allow_nan=False))
            return
        for text in e.messages:
            self.message(text)
        target = e.target_nm
        rate = "–" if e.rate_nm_per_s is None else f"{e.rate_nm_per_s:.4f}"
        if self.tty:
            left = _fmt_time(e.time_left_s)
            ratio = "   –  " if e.ratio is None else f"{percent(e.ratio)} %"
            flag = "" if e.status in ("ok", "reached") else f"  ({e.status})"
            line = (f"t {e.t_s:7.1f} s  reading {ratio}  {e.thickness_nm:7.2f} nm  {rate} nm/s  "
                    f"left {left:>10}  {_bar(e.thickness_nm / target if target else 0)}{flag}")
            pad = max(self.width - len(line), 0)
            click.echo("\r" + line + " " * pad, nl=False)
            self.width = len(line)
            return
        if not self.header_done:
            click.echo(f"{'t_s':>9} {'reading':>12} {'ratio %':>8} {'nm':>8} {'nm/s':>8} {'left':>10}  status")
            self.header_done = True
        ratio = "–" if e.ratio is None else percent(e.ratio)
        reading = "–" if e.reading is None else f"{e.reading:.6g}"
        click.echo(f"{e.t_s:9.2f} {reading:>12} {ratio:>8} {e.thickness_nm:8.3f} {rate:>8} "
                   f"{_fmt_time(e.time_left_s):>10}  {e.status}")

    def bell(self):
        stream = sys.stdout if (sys.stdout.isatty() and not self.as_json) else sys.stderr
        if stream.isatty():
            stream.write("\a")
            stream.flush()

    def finish(self):
        if self.tty and self.width:
            click.echo("")
            self.width = 0


def _run_command(command, estimate):
    """Run the --on-target command once; returns (ok, message)."""
    import os
    import shlex
    import subprocess

    env = dict(os.environ, FILMOPTIC_THICKNESS_NM=f"{estimate.thickness_nm:.4f}", FILMOPTIC_T_S=f"{estimate.t_s:.3f}",
               FILMOPTIC_READING="" if estimate.reading is None else f"{estimate.reading:.9g}")
    # The command's own output goes to stderr, so that --json output stays clean.
    try:
        out = sys.stderr.fileno()
    except (AttributeError, OSError, ValueError):
        out = subprocess.DEVNULL
    try:
        done = subprocess.run(shlex.split(command), env=env, timeout=ON_TARGET_TIMEOUT_S,
                              stdin=subprocess.DEVNULL, stdout=out)
    except subprocess.TimeoutExpired:
        return False, f"--on-target command still running after {ON_TARGET_TIMEOUT_S:.0f} s; left it"
    except OSError as exc:
        return False, f"--on-target command could not run: {exc.strerror or exc}"
    if done.returncode != 0:
        return False, f"--on-target command failed with exit code {done.returncode}"
    return True, "--on-target command ran"


def _check_command(command):
    import shlex
    import shutil

    from filmoptic.errors import FilmopticError

    try:
        words = shlex.split(command)
    except ValueError as exc:
        raise FilmopticError(f"--on-target: cannot split the command ({exc})") from None
    if not words:
        raise FilmopticError("--on-target: the command is empty")
    if shutil.which(words[0]) is None:
        raise FilmopticError(f"--on-target: no program {words[0]!r} found (give its path, or put it on PATH)")


def _print_plan(table, plan, reference, dark, as_json):
    rows = []
    for i, d in enumerate(table.thickness_nm):
        row = [f"{d:.2f}"]
        if table.time_s is not None:
            row.append(f"{table.time_s[i]:.1f}")
        row.append(percent(table.ratio[i]))
        if reference is not None:
            row.append(_raw(dark + table.ratio[i] * (reference - dark), reference))
        row.append("← stop" if abs(d - table.target_nm) <= 1e-9 * table.target_nm else "")
        rows.append(row)
    target_reading = None if reference is None else dark + table.target_ratio * (reference - dark)
    if as_json:
        emit_json({
            "stack": plan.model.stack, "layer": plan.model.layer, "source": plan.model.source,
            "detector": plan.model.detector, "reference_kind": plan.model.reference_kind,
            "target": plan.target.label, "target_kind": plan.target.kind, "target_nm": table.target_nm,
            "target_ratio": table.target_ratio, "target_reading": target_reading,
            "nm_per_percent": table.nm_per_percent, "rate_nm_per_s": table.rate_nm_per_s,
            "time_to_target_s": table.time_to_target_s,
            "turning_points": [{"thickness_nm": d, "ratio": r} for d, r in zip(table.turning_nm, table.turning_ratio)],
            "rows": [{"thickness_nm": d, "ratio": r, "time_s": None if table.time_s is None else table.time_s[i]}
                     for i, (d, r) in enumerate(zip(table.thickness_nm, table.ratio))],
        })
        return
    what = "the uncoated part" if table.reference_kind == "bare" else "the open beam"
    click.echo(f"Monitor plan for {plan.model.stack} ({plan.model.layer} growing), {plan.model.source} source, "
               f"{plan.model.detector} detector, readings relative to {what}")
    headers = ["thickness (nm)"] + (["time (s)"] if table.time_s is not None else []) + ["reading (%)"]
    headers += (["raw reading"] if reference is not None else []) + [""]
    print_table(headers, rows)
    click.echo("")
    stop = f"Stop at {table.target_nm:.2f} nm ({table.target_label}): the reading is {percent(table.target_ratio)} % of {what}"
    if target_reading is not None:
        stop += f", {_raw(target_reading, reference)} raw"
    click.echo(stop + ".")
    if table.time_to_target_s is not None:
        click.echo(f"At {table.rate_nm_per_s:.4g} nm/s that is {_fmt_time(table.time_to_target_s)} after the shutter opens.")
    if table.nm_per_percent == float("inf"):
        click.echo("The signal stands still at the stop (a turning point): the monitor follows the fringe order and "
                   "the growth rate to place it.")
    else:
        click.echo(f"One percentage point of the reading (as % of the reference) is worth {table.nm_per_percent:.3f} nm "
                   "there: an error that size in the reference or the model moves the stop by that much.")
    if table.turning_nm.size:
        shown = ", ".join(f"{d:.1f} nm ({percent(r)} %)" for d, r in zip(table.turning_nm, table.turning_ratio))
        click.echo(f"Turning points on the way: {shown}.")


@click.command()
@click.argument("stack")
@click.argument("input_path", metavar="[INPUT]", required=False)
@click.option("--source", default="D65", show_default=True, metavar="LIGHT",
              help="The monitor's light: laser:WL, led:WL/FWHM, an illuminant (A for a halogen lamp) or a "
                   "two-column spectrum file.")
@click.option("--detector", default="photopic", show_default=True, metavar="SENSOR",
              help="The monitor's detector: flat (a photodiode behind a filter, a power meter), photopic "
                   "(a lux meter) or a two-column response file.")
@click.option("--reference-kind", type=click.Choice(["bare", "open"]), default="bare", show_default=True,
              help="What the reference reading sees: the uncoated part before the shutter opens (bare) or "
                   "the open beam (open).")
@click.option("--baseline", "baseline_text", default="5s", show_default=True, metavar="DURATION",
              help="Average the first readings over this time into the reference (the shutter must stay "
                   "closed meanwhile); 0 takes the first reading.")
@click.option("--reference", "reference_text", metavar="VALUE",
              help="The raw reference reading, known beforehand (skips --baseline).")
@click.option("--dark", "dark_text", metavar="VALUE[,REF]",
              help="The raw reading with the light blocked, subtracted from every reading (after a comma: "
                   "the reference detector's).")
@click.option("--target", "target_text", metavar="THICKNESS", help="Stop at this thickness, e.g. 9nm.")
@click.option("--luminous-T", "luminous_t", metavar="VALUE",
              help="Stop where the part's luminous transmittance (ISO 9050, --illuminant) reaches VALUE.")
@click.option("--luminous-R", "luminous_r", metavar="VALUE",
              help="Stop where its luminous reflectance (--side reverse: from the substrate side) reaches VALUE.")
@click.option("--T-at", "t_at", multiple=True, metavar="WL=VALUE",
              help="Stop where the transmittance at a wavelength reaches VALUE, e.g. 550=40%.")
@click.option("--R-at", "r_at", multiple=True, metavar="WL=VALUE", help="The same for reflectance.")
@click.option("--illuminant", default="D65", show_default=True, metavar="NAME",
              help="Illuminant of --luminous-T/--luminous-R.")
@click.option("--side", type=click.Choice(["front", "reverse"]), default="front", show_default=True,
              help="Side the --luminous-R/--R-at target is seen from.")
@click.option("--stop-at", "stop_at", metavar="RATIO",
              help="Stop when the monitor's own ratio (reading ÷ reference) reaches this, e.g. 0.33 or 33%.")
@click.option("--turning-points", type=click.IntRange(min=1), metavar="N",
              help="Stop at the N-th turning point of the signal (turning-point monitoring of quarter waves).")
@click.option("--solution", type=click.IntRange(min=1), default=1, show_default=True, metavar="N",
              help="Which thickness meets a target met several times (thinnest first).")
@click.option("--warn-before", "warn_text", metavar="DURATION", help="Say so once when this much time is left, e.g. 10s.")
@click.option("--on-target", "on_target", metavar="CMD",
              help="Run this command once at the target (e.g. a relay script that closes the shutter); it gets "
                   "FILMOPTIC_THICKNESS_NM, FILMOPTIC_T_S and FILMOPTIC_READING in its environment.")
@click.option("--window", "window_text", default="10s", show_default=True, metavar="DURATION",
              help="Time over which the rate is measured: shorter follows changes faster, longer smooths more.")
@click.option("--interval", "interval_text", metavar="DURATION",
              help="Time between readings for rows without a time (default: when they arrive).")
@click.option("--timeout", "timeout_text", metavar="DURATION",
              help="End the run when no reading arrives for this long (default: wait for ever).")
@click.option("--log", "log_path", metavar="FILE",
              help="Append every reading and estimate to this CSV file, synced to disk line by line.")
@click.option("--resume", is_flag=True, help="Continue the run recorded in --log after a crash.")
@click.option("--replay", is_flag=True,
              help="INPUT is a complete recorded file: run over it as fast as possible (see --speed).")
@click.option("--speed", type=FiniteFloatRange(min=0, min_open=True), metavar="X",
              help="With --replay: replay in simulated real time, X times faster.")
@click.option("--keep-going", is_flag=True, help="Go on after the target (to watch the overshoot, or replay a whole run).")
@click.option("--plan", "plan_only", is_flag=True,
              help="Before the run: the expected signal against thickness (and time, with --rate), the stop "
                   "value and what 1 % of signal is worth there. Needs no INPUT.")
@click.option("--rate", "rate_text", metavar="RATE", help="Expected rate for --plan, e.g. 0.075nm/s or 4.5nm/min.")
@click.option("--plot", "plot_path", metavar="FILE",
              help="Write a plot (PNG, SVG or PDF): the plan, or the run's signal and thickness against time.")
@click.option("--range", "range_text", metavar="0:STOP", help="Thicknesses to model, nm (default: the solve "
              "range of the layer, stretched past the target).")
@click.option("--step", type=FiniteFloatRange(min=1e-4, max=5), metavar="NM",
              help="Grid step of the modelled signal, nm (default: 0.02 or finer).")
@angle_option
@ambient_option
@extrapolate_option
@json_option
def monitor(stack, input_path, source, detector, reference_kind, baseline_text, reference_text, dark_text,
            target_text, luminous_t, luminous_r, t_at, r_at, illuminant, side, stop_at, turning_points, solution,
            warn_text, on_target, window_text, interval_text, timeout_text, log_path, resume, replay, speed,
            keep_going, plan_only, rate_text, plot_path, range_text, step, angle, ambient, extrapolate, as_json):
    """Thickness, rate and time to stop from a live light signal, while the layer grows.

    A light source and a photodiode looking through the part (or a witness glass) read less or
    more light as the top layer grows. STACK has one unknown, the layer being deposited:
    "Ti ? / glass 4mm", "TiO2 ? / SiO2 95nm / glass 1mm". INPUT is where the readings come from:

    \b
      run.csv                 a file a logger is writing: followed as it grows (like tail -f)
      -                       standard input (a pipe from your logger)
      serial:/dev/ttyUSB0@9600  a serial port (needs pyserial: pip install 'filmoptic[serial]')

    Each row is a reading, or a time and a reading, optionally followed by a reference
    detector's reading (a second photodiode that sees the source alone, so a drifting lamp divides
    out). Times are seconds, a clock time (10:02:03.5) or a date and time. A header such as
    t_s,reading is understood; commas, semicolons, tabs or spaces separate the columns.

    The reference is the signal through the uncoated part before the shutter opens: the mean of
    the first --baseline seconds (keep the shutter closed meanwhile), or --reference VALUE.
    --reference-kind open says it is the open beam instead. --dark is subtracted first.

    Say where to stop with one of:

    \b
      --target 9nm              a thickness
      --luminous-T 30%          a condition as in 'filmoptic solve' (also --luminous-R, --T-at, --R-at)
      --stop-at 33%             the monitor's own ratio
      --turning-points 2        the 2nd turning point (quarter-wave layers at a laser line)

    For every reading the monitor gives the thickness now, the rate over the last --window, the
    time left, and the reading expected at the target. It follows a dielectric's fringes from the
    start (its signal rises and falls), so it never jumps to another interference order. Outliers,
    dropouts, gaps, a stuck reading, a signal that changes during the baseline or one the model
    cannot explain are reported and ridden out.

    At the target: a message, the terminal bell, --on-target CMD (once), and exit status 0 (with
    --keep-going it carries on). Exit status 3 means the input ended (or --timeout passed) before
    the target; 4 that the target was reached but the --on-target command failed; 130 an
    interrupt (Ctrl-C). On a terminal one status line is kept up to date; --json prints one JSON
    object per reading (t_s, reading, ratio, thickness_nm, rate_nm_per_s, time_left_s,
    target_reached, …) and a final summary with "final": true.

    --log FILE appends every reading and estimate as CSV, synced line by line; after a crash,
    run the same command with --resume to continue the same log and the same run. --replay runs
    over a recorded file at once (or at --speed X times real time); --plan shows what to expect
    before the run:

    \b
        filmoptic monitor "Ti ? / glass 4mm" --source led:530/30 --detector flat \\
            --luminous-T 30% --plan --rate 4.5nm/min --plot plan.png
        filmoptic monitor "Ti ? / glass 4mm" run.csv --source led:530/30 --detector flat \\
            --luminous-T 30% --log run-log.csv --warn-before 10s

    The monitor computes; it is no interlock. Keep the coater's own shutter, power and vacuum
    interlocks in charge.
    """
    from filmoptic.errors import FilmopticError
    from filmoptic.units import parse_fraction, parse_length_nm, parse_number, parse_range_nm

    with user_errors():
        if plot_path is not None:
            check_plot_path(plot_path)
        baseline_s = _duration(baseline_text, "--baseline", allow_zero=True)
        window_s = _duration(window_text, "--window")
        warn_s = _duration(warn_text, "--warn-before")
        interval_s = _duration(interval_text, "--interval")
        timeout_s = _duration(timeout_text, "--timeout")
        reference = None if reference_text is None else parse_number(reference_text, "--reference")
        dark, reference_dark = _dark(dark_text)
        target_nm = None if target_text is None else parse_length_nm(target_text, "--target", allow_zero=False)
        stop_ratio = None if stop_at is None else parse_fraction(stop_at, what="--stop-at", hi=2.0)
        range_nm = None if range_text is None else parse_range_nm(range_text)[:2]
        conditions = _conditions(luminous_t, luminous_r, t_at, r_at, illuminant, side)
        if plan_only:
            for name, value in (("INPUT", input_path), ("--log", log_path), ("--resume", resume or None),
                                ("--replay", replay or None), ("--on-target", on_target)):
                if value is not None:
                    raise FilmopticError(f"--plan shows what to expect before the run; drop {name}")
        else:
            if rate_text is not None:
                raise FilmopticError("--rate belongs to --plan (during a run the rate is measured)")
            if input_path is None:
                raise FilmopticError("give INPUT (a file, - for standard input, or serial:PORT@BAUD), or --plan")
            if speed is not None and not replay:
                raise FilmopticError("--speed belongs to --replay")
            if resume and log_path is None:
                raise FilmopticError("--resume continues the run in --log FILE: give the log")
            if on_target is not None:
                _check_command(on_target)
        from filmoptic.monitor.session import prepare

        if sys.stderr.isatty() and not as_json:
            click.echo("Modelling the signal…", err=True)
        plan = prepare(stack, source=source, detector=detector, reference_kind=reference_kind, target_nm=target_nm,
                       conditions=conditions, stop_ratio=stop_ratio, turning_points=turning_points, solution=solution,
                       range_nm=range_nm, step_nm=step, angle_deg=angle, extrapolate=extrapolate, ambient=ambient)
        if plan_only:
            from filmoptic.monitor.plan import parse_rate_nm_per_s, plan_table

            rate = None if rate_text is None else parse_rate_nm_per_s(rate_text)
            table = plan_table(plan, rate)
            _print_plan(table, plan, reference, dark, as_json)
            if plot_path is not None:
                from filmoptic.plots.monitor import plot_plan

                save_plot(plot_plan(table, title=f"{plan.model.stack} — {plan.model.source}, {plan.model.detector}"),
                          plot_path)
                if not as_json:
                    click.echo(f"Plot: {plot_path}")
            return 0
        return _run(plan, input_path, baseline_s=baseline_s, reference=reference, dark=dark,
                    reference_dark=reference_dark, window_s=window_s, warn_s=warn_s, interval_s=interval_s,
                    timeout_s=timeout_s, log_path=log_path, resume=resume, replay=replay, speed=speed,
                    keep_going=keep_going, on_target=on_target, plot_path=plot_path, as_json=as_json,
                    settings=dict(stack=stack, source=source, detector=detector, reference_kind=reference_kind,
                                  baseline_s=baseline_s, reference=reference, dark=[dark, reference_dark],
                                  target=plan.target.label, target_nm=round(plan.target.thickness_nm, 6),
                                  window_s=window_s, interval_s=interval_s, angle_deg=angle, ambient=ambient,
                                  input=input_path))


def _run(plan, input_path, *, baseline_s, reference, dark, reference_dark, window_s, warn_s, interval_s, timeout_s,
         log_path, resume, replay, speed, keep_going, on_target, plot_path, as_json, settings):
    import time

    from filmoptic.errors import FilmopticError
    from filmoptic.monitor.session import Monitor, RunLog, StreamRun, read_log
    from filmoptic.monitor.sources import open_lines, parse_input

    spec = parse_input(input_path)
    if replay and spec.kind != "file":
        raise FilmopticError("--replay reads a recorded file; give its path as INPUT")
    if spec.kind == "file" and replay:
        import os

        if not os.path.isfile(spec.path):
            raise FilmopticError(f"{spec.path}: no such file to replay")
    monitor = Monitor(plan, baseline_s=baseline_s, reference=reference, dark=dark, reference_dark=reference_dark,
                      window_s=window_s, warn_before_s=warn_s)
    skip_line, skip_clock, started = 0, None, time.time()
    log = None
    if log_path is not None:
        if resume:
            logged_settings, rows = read_log(log_path)
            started = logged_settings.get("started") or started
            monitor.restore(rows)
            if rows:
                skip_line = max((r[3] or 0) for r in rows) if spec.kind == "file" else 0
                skip_clock = rows[-1][0] if spec.kind != "file" else None
        log = RunLog.open(log_path, settings, resume=resume, started=started)
    # Said once the first reading is in: a run that fails on its first row (no light during the
    # baseline) ends with one error line, the caution for a command that never ran left out.
    caution_due = on_target is not None
    display = _Display(as_json, plan)
    tgt = plan.target
    if not as_json:
        what = "the uncoated part" if plan.model.reference_kind == "bare" else "the open beam"
        per = plan.nm_per_percent()
        worth = "" if per == float("inf") else f"; 1 % of signal = {per:.3f} nm there"
        click.echo(f"Monitoring {plan.model.layer} in {plan.model.stack} ({plan.model.source}, {plan.model.detector} "
                   f"detector) from {spec.label}")
        click.echo(f"Target {tgt.label}: stop at {tgt.thickness_nm:.2f} nm, where the reading is "
                   f"{percent(tgt.ratio)} % of {what}{worth}")
        if monitor.last is not None:
            click.echo(f"Resumed from {log_path}: {monitor.counts['readings']} readings restored, at "
                       f"{monitor.last.thickness_nm:.2f} nm")
    run = StreamRun(monitor, open_lines(spec, follow=not replay), interval_s=interval_s, live=not replay,
                    speed=speed, timeout_s=timeout_s, skip_through_line=skip_line, skip_through_clock=skip_clock,
                    log=log)
    estimates = [] if plot_path is not None else None
    command_ok = True
    ended = None
    already = monitor.reached_at is not None
    try:
        for estimate in run:
            if estimate is None:
                continue
            if caution_due:
                echo_caution(ON_TARGET_CAUTION, as_json)
                caution_due = False
            if estimates is not None:
                estimates.append(estimate)
            if estimate.target_reached and not already:
                already = True
                if on_target is not None:
                    command_ok, said = _run_command(on_target, estimate)
                display.estimate(estimate)
                display.bell()
                if on_target is not None:
                    display.message(said)
                if not keep_going:
                    ended = "target"
                    break
                continue
            display.estimate(estimate)
        else:
            ended = run.ended
    except KeyboardInterrupt:
        ended = "interrupted"
    except FilmopticError as exc:
        if monitor.last is None:
            raise
        display.finish()
        click.echo(f"filmoptic: error: {exc}", err=True)
        ended = "input failed"
    finally:
        if log is not None:
            log.close()
    display.finish()
    summary = monitor.summary(ended or "end of input")
    if on_target is not None:
        summary["on_target_command_ok"] = command_ok if already else None
    if as_json:
        import json

        click.echo(json.dumps(summary, allow_nan=False))
    else:
        _print_summary(summary, tgt)
    if plot_path is not None and estimates:
        from filmoptic.plots.monitor import plot_run

        save_plot(plot_run(estimates, title=f"{plan.model.stack}: {tgt.label}"), plot_path)
        if not as_json:
            click.echo(f"Plot: {plot_path}")
    if ended == "interrupted":
        return EXIT_INTERRUPTED
    if not summary["target_reached"]:
        return EXIT_NOT_REACHED
    return 0 if command_ok else EXIT_COMMAND_FAILED


def _print_summary(summary, target):
    click.echo("")
    if summary["target_reached"]:
        click.echo(f"Target reached ({target.label}) at t = {summary['stop_t_s']:.1f} s: "
                   f"{summary['stop_thickness_nm']:.2f} nm (aimed at {summary['target_nm']:.2f} nm).")
    else:
        why = {"timeout": "no reading came for --timeout", "end of input": "the input ended",
               "interrupted": "interrupted", "input failed": "the input failed"}.get(summary["ended"], summary["ended"])
        now = "" if summary["thickness_nm"] is None else f"; the layer is at {summary['thickness_nm']:.2f} nm"
        click.echo(f"Target not reached ({why}){now}, aiming at {summary['target_nm']:.2f} nm.")
    extras = [f"{summary[k]} {k if summary[k] != 1 else k[:-1]}" for k in ("outliers", "dropouts", "bad rows")
              if summary[k]]
    click.echo(f"{summary['readings']} readings" + (f" ({', '.join(extras)})" if extras else "") + ".")
