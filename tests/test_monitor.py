"""The live monitor's Python API: the modelled signal, branch tracking, the robust rate, the run.

Synthetic runs come from forward models: the quarter-wave run from the independent `tmm` package
(S. J. Byrnes, "Multilayer optical calculations", arXiv:1603.02720, 2016), the semi-mirror run
from filmoptic's own forward model (checked against tmm in test_engine_tmm.py) with the demo
scenario's invented imperfections.
"""

from __future__ import annotations

import functools
import math

import numpy as np
import pytest

from filmoptic.errors import FilmopticError
from filmoptic.monitor.rate import RateWindow, theil_sen
from filmoptic.monitor.rows import RowReader
from filmoptic.monitor.session import Monitor, prepare
from filmoptic.monitor.signal import BranchTracker, signal_model

LASER_NM = 633.0
QW_STACK = "TiO2 ? / glass 1mm"


# ------------------------------------------------------------------------------------------------
# Synthetic runs
# ------------------------------------------------------------------------------------------------


def _indices(wl):
    from filmoptic.materials import get_material

    return tuple(complex(get_material(name).nk(np.array([wl]))[0]) for name in ("TiO2", "glass", "air"))


def tmm_ratio(thickness_nm, wl=LASER_NM):
    """Transmittance of TiO2 on a 1 mm glass slab over the bare slab's, from tmm's inc_tmm."""
    import tmm

    n_film, n_glass, n_air = _indices(wl)

    def T(d):
        return tmm.inc_tmm("s", [n_air, n_film, n_glass, n_air], [np.inf, d, 1e6, np.inf], ["i", "c", "i", "i"], 0.0,
                           wl)["T"]

    bare = T(0.0)
    return np.array([T(float(d)) for d in np.atleast_1d(thickness_nm)]) / bare


@functools.lru_cache(maxsize=None)
def quarter_wave_run(turning_points=3, *, rate=0.5, interval=0.25, opens=8.0, volts=3.0, noise=0.001, seed=7):
    """Times, readings and true thicknesses of a TiO2 run read with a laser, past turning point N
    (the same run, cut short, for every N up to 3)."""
    if turning_points < 3:
        t, readings, d = quarter_wave_run(3, rate=rate, interval=interval, opens=opens, volts=volts, noise=noise,
                                          seed=seed)
        n = _indices(LASER_NM)[0].real
        keep = d <= (turning_points + 0.4) * LASER_NM / (4 * n)
        return t[keep], readings[keep], d[keep]
    n = _indices(LASER_NM)[0].real
    length = opens + (turning_points + 0.4) * LASER_NM / (4 * n) / rate
    t = np.arange(0.0, length, interval)
    d = np.clip((t - opens) * rate, 0.0, None)
    rng = np.random.default_rng(seed)
    return t, volts * tmm_ratio(d) * (1 + noise * rng.standard_normal(t.size)), d


def feed_until_target(monitor, t, readings, references=None):
    for i in range(t.size):
        e = monitor.feed(t[i], readings[i], None if references is None else references[i], line=i + 1)
        if e.target_reached:
            return i, e
    return None, e


@pytest.fixture(scope="module")
def mirror():
    """The demo scenario's semi-mirror: its plan and its synthetic recording."""
    from filmoptic.demo import scenario as sc
    from filmoptic.demo.monitor import _mirror_run
    from filmoptic.inverse.solve import Target

    plan = prepare(sc.MONITOR_STACK, source=sc.MONITOR_SOURCE, detector=sc.MONITOR_DETECTOR,
                   conditions=[Target("luminous_T", sc.MONITOR_TARGET_LUMINOUS_T)])
    return plan, _mirror_run(), sc


# ------------------------------------------------------------------------------------------------
# The modelled signal
# ------------------------------------------------------------------------------------------------


def test_signal_model_agrees_with_tmm_for_a_laser_line():
    model = signal_model(QW_STACK, "laser:633", "flat", "bare", range_nm=(0, 300))
    d = np.array([0.0, 17.3, 68.0, 140.2, 251.9])
    # Independent transfer-matrix code (Byrnes 2016, the tmm package), incoherent 1 mm slab;
    # the model's grid is linear in 0.02 nm steps, which errs by under 1e-7 here.
    assert np.allclose(model.ratio_at(d), tmm_ratio(d), rtol=0, atol=2e-7)


def test_turning_points_lie_at_quarter_waves():
    model = signal_model(QW_STACK, "laser:633", "flat", "bare", range_nm=(0, 300))
    n = _indices(LASER_NM)[0].real
    # Extrema of a single transparent film's response at n·d = m·λ/4 (H. A. Macleod, Thin-Film
    # Optical Filters, 4th ed., 2010, ch. 3); located to the model's 0.02 nm grid.
    expected = np.arange(1, 5) * LASER_NM / (4 * n)
    assert model.turning_nm.size == 4
    assert np.allclose(model.turning_nm, expected, atol=0.02)


def test_quarter_wave_value_matches_the_closed_form():
    model = signal_model("n=2.3 ? / n=1.52 1mm", "laser:600", "flat", "bare", range_nm=(0, 100), ambient="n=1")
    # R of a quarter-wave layer ((n0·ns − n1²)/(n0·ns + n1²))² and of the bare surface; the back
    # surface adds its reflectance incoherently to both (Macleod 2010, ch. 3; common practice for
    # thick slabs): T = T1·T2/(1 − R1·R2).
    r_qw = ((1.52 - 2.3**2) / (1.52 + 2.3**2)) ** 2
    r_s = ((1 - 1.52) / (1 + 1.52)) ** 2
    t_coated = (1 - r_qw) * (1 - r_s) / (1 - r_qw * r_s)
    t_bare = (1 - r_s) ** 2 / (1 - r_s**2)
    assert model.turning_ratio[0] == pytest.approx(t_coated / t_bare, abs=1e-9)
    assert model.turning_nm[0] == pytest.approx(600 / (4 * 2.3), abs=0.02)


def test_metal_model_falls_monotonically_and_has_no_flat_zone():
    model = signal_model("Ti ? / glass 4mm", "led:530/30", "flat", "bare")
    assert model.turning_nm.size == 0
    assert np.all(np.diff(model.ratio) < 0)
    assert model.flat_zones_nm.size == 0


def test_open_reference_divides_by_the_open_beam():
    bare = signal_model(QW_STACK, "laser:633", "flat", "bare", range_nm=(0, 100))
    open_ = signal_model(QW_STACK, "laser:633", "flat", "open", range_nm=(0, 100))
    glass = _indices(LASER_NM)[1]
    n_glass, n_air = glass.real, _indices(LASER_NM)[2].real
    r = ((n_glass - n_air) / (n_glass + n_air)) ** 2
    # The 1 mm slab's single-pass internal transmittance (Beer–Lambert, exp(−4πkd/λ)).
    tau = np.exp(-4 * np.pi * glass.imag * 1e6 / LASER_NM)
    # A bare slab passes (1 − R)²τ/(1 − R²τ²) of the open beam (two surfaces, incoherent; common
    # practice).
    assert open_.ratio[0] == pytest.approx((1 - r) ** 2 * tau / (1 - r**2 * tau**2), abs=1e-9)
    assert np.allclose(open_.ratio, bare.ratio * open_.ratio[0], atol=1e-12)


def test_an_absorbing_half_space_substrate_is_refused():
    with pytest.raises(FilmopticError, match="absorbing half-space"):
        signal_model("TiO2 ? / Si", "laser:633", "flat", "bare")


def test_branch_tracker_follows_the_fringe_order_not_the_nearest_root():
    model = signal_model(QW_STACK, "laser:633", "flat", "bare", range_nm=(0, 300))
    tracker = BranchTracker(model)
    thickness = np.arange(0.0, 250.0, 0.5)
    found = [tracker.update(float(model.ratio_at(d)), d).thickness_nm for d in thickness]
    # Every value recurs each half wave; followed from the start the true thickness comes back.
    assert np.max(np.abs(np.array(found) - thickness)) < 1e-6
    assert tracker.branch == 3


# ------------------------------------------------------------------------------------------------
# The robust rate
# ------------------------------------------------------------------------------------------------


def test_theil_sen_matches_scipy():
    from scipy.stats import theilslopes

    rng = np.random.default_rng(3)
    t = np.sort(rng.uniform(0, 20, 40))
    y = 0.08 * t + 1.0 + 0.02 * rng.standard_normal(40)
    y[[5, 17]] += [3.0, -2.0]
    slope, intercept = theil_sen(t, y)
    # Theil (1950) and Sen (1968) as implemented in scipy.stats.theilslopes (intercept
    # median(y − slope·t): method "joint").
    ref = theilslopes(y, t, method="joint")
    assert slope == pytest.approx(ref.slope, abs=1e-12)
    assert intercept == pytest.approx(ref.intercept, abs=1e-12)


def test_rate_window_ignores_a_wild_point_and_forgets_old_ones():
    window = RateWindow(window_s=10.0)
    for k in range(60):
        t = 0.5 * k
        window.add(t, 0.1 * t if k != 50 else 99.0)
    est = window.estimate(29.5)
    assert est.points == 21 and est.rate_nm_per_s == pytest.approx(0.1, abs=1e-12)
    assert est.thickness_nm == pytest.approx(2.95, abs=1e-12)


# ------------------------------------------------------------------------------------------------
# Runs
# ------------------------------------------------------------------------------------------------


def test_semi_mirror_run_stops_at_the_target(mirror):
    plan, rec, sc = mirror
    monitor = Monitor(plan, baseline_s=5.0, dark=sc.MONITOR_DARK_COUNTS)
    i, stop = feed_until_target(monitor, rec.t_s, rec.reading, rec.reference_reading)
    assert stop.target_reached and stop.status == "reached"
    # A reading every 0.2 s grows the film 0.015 nm; with 0.2 % noise on a slope of 3 %/nm the
    # stop must fall within 0.05 nm of the target thickness (true thickness of the synthetic run).
    assert abs(rec.thickness_nm[i] - plan.target.thickness_nm) < 0.05
    assert stop.rate_nm_per_s == pytest.approx(sc.MONITOR_RATE_NM_PER_S, rel=0.05)
    summary = monitor.summary("target")
    assert summary["outliers"] >= 1 and summary["dropouts"] >= 1
    assert any("dropout" in n for n in summary["notes"])


def test_source_drift_without_a_reference_detector_is_named(mirror):
    plan, rec, sc = mirror
    monitor = Monitor(plan, baseline_s=5.0, dark=sc.MONITOR_DARK_COUNTS)
    first = monitor.feed(0.0, rec.reading[0])
    assert any("drift of the source cannot be told from growth" in m for m in first.messages)
    with_reference = Monitor(plan, baseline_s=5.0, dark=sc.MONITOR_DARK_COUNTS)
    assert not any("drift" in m for m in with_reference.feed(0.0, rec.reading[0], rec.reference_reading[0]).messages)


def test_the_time_left_counts_down_to_the_stop(mirror):
    plan, rec, sc = mirror
    monitor = Monitor(plan, baseline_s=5.0, dark=sc.MONITOR_DARK_COUNTS, warn_before_s=10.0)
    warned = None
    for i in range(rec.t_s.size):
        e = monitor.feed(rec.t_s[i], rec.reading[i], rec.reference_reading[i])
        if i == 400:
            left_at_400 = e.time_left_s
        if any("to the target" in m for m in e.messages):
            warned = e
        if e.target_reached:
            break
    # The time left predicted 80 s after the start agrees with when the stop came (steady rate).
    assert left_at_400 == pytest.approx(e.t_s - rec.t_s[400], abs=2.0)
    assert warned is not None and 9.0 <= e.t_s - warned.t_s <= 11.0


@pytest.mark.parametrize("order", [1, 2])
def test_turning_point_monitoring_stops_at_the_right_turning_point(order):
    t, readings, d = quarter_wave_run(order)
    plan = prepare(QW_STACK, source="laser:633", detector="flat", turning_points=order)
    monitor = Monitor(plan, baseline_s=5.0)
    i, stop = feed_until_target(monitor, t, readings)
    n = _indices(LASER_NM)[0].real
    # The N-th turning point of a transparent film lies at n·d = N·λ/4 (Macleod 2010, ch. 3);
    # neighbouring ones are 69 nm away. The stop is timed through the flat top from the rate on
    # either side: within 1 nm.
    assert i is not None
    assert abs(d[i] - order * LASER_NM / (4 * n)) < 1.0
    assert stop.turning_points == order - 1


def test_a_dielectric_run_is_followed_past_turning_points_with_noise():
    t, readings, d = quarter_wave_run(3)
    plan = prepare(QW_STACK, source="laser:633", detector="flat", target_nm=300.0)
    monitor = Monitor(plan, baseline_s=5.0)
    estimates = [monitor.feed(t[i], readings[i]) for i in range(t.size)]
    thickness = np.array([e.thickness_nm for e in estimates])
    late = d > 20
    # Never on the wrong interference order: within 1.5 nm everywhere after the flat start.
    assert np.max(np.abs(thickness[late] - d[late])) < 1.5
    assert estimates[-1].turning_points == 3


# ------------------------------------------------------------------------------------------------
# What the chamber does to a signal
# ------------------------------------------------------------------------------------------------


@pytest.fixture(scope="module")
def metal_plan():
    return prepare("n=2.5+3j ? / n=1.5 1mm", source="laser:600", detector="flat", target_nm=20.0, ambient="n=1")


def _ramp(plan, t, rate=0.2, opens=6.0, scale=1000.0):
    return scale * plan.model.ratio_at(np.clip((t - opens) * rate, 0.0, None))


def _messages(monitor, t, readings):
    out = []
    for i in range(t.size):
        e = monitor.feed(t[i], readings[i], line=i + 1)
        out.extend((t[i], m) for m in e.messages)
    return out


def test_a_gap_in_the_data_is_reported_and_bridged(metal_plan):
    t = np.concatenate([np.arange(0.0, 40.0, 0.5), np.arange(60.0, 80.0, 0.5)])
    monitor = Monitor(metal_plan, baseline_s=5.0)
    said = _messages(monitor, t, _ramp(metal_plan, t))
    assert any(time_ == 60.0 and "gap of 20.5 s" in m for time_, m in said)
    assert monitor.last.thickness_nm == pytest.approx((79.5 - 6.0) * 0.2, abs=0.01)


def test_a_stuck_reading_is_reported(metal_plan):
    t = np.arange(0.0, 40.0, 0.5)
    readings = _ramp(metal_plan, t)
    readings[50:70] = readings[50]
    said = _messages(Monitor(metal_plan, baseline_s=5.0), t, readings)
    assert [time_ for time_, m in said if "has stayed at" in m] == [t[59]]


def test_a_signal_that_starts_during_the_baseline_is_reported(metal_plan):
    t = np.arange(0.0, 20.0, 0.25)
    said = _messages(Monitor(metal_plan, baseline_s=5.0), t, _ramp(metal_plan, t, opens=2.0))
    assert any("during the 5 s baseline" in m for _, m in said)
    quiet = _messages(Monitor(metal_plan, baseline_s=5.0), t, _ramp(metal_plan, t, opens=6.0))
    assert not any("baseline:" in m for _, m in quiet)


def test_a_signal_the_model_cannot_explain_is_reported(metal_plan):
    t = np.arange(0.0, 40.0, 0.5)
    rising = 1000.0 * (1.0 + 0.004 * np.clip(t - 6.0, 0.0, None))   # rises where only a fall is possible
    monitor = Monitor(metal_plan, baseline_s=5.0)
    said = [m for _, m in _messages(monitor, t, rising)]
    assert any("cannot explain" in m for m in said)
    assert any("outside [0, 1]" in m for m in said)
    assert monitor.last.status == "beyond model" and monitor.last.thickness_nm == 0.0


def test_a_signal_moving_backwards_is_reported():
    plan = prepare("n=2.5+3j ? / n=1.5 1mm", source="laser:600", detector="flat", target_nm=20.0, ambient="n=1")
    t = np.arange(0.0, 60.0, 0.5)
    d = np.where(t < 30, (t - 6).clip(0) * 0.2, (54 - t).clip(0) * 0.2)   # "grows" then "shrinks"
    said = [m for _, m in _messages(Monitor(plan, baseline_s=5.0), t, 1000.0 * plan.model.ratio_at(d))]
    assert any("would be shrinking" in m for m in said)


def test_readings_outside_zero_one_are_reported_not_fatal():
    plan = prepare("n=2.5+3j ? / n=1.5 1mm", source="laser:600", detector="flat", target_nm=20.0,
                   reference_kind="open", ambient="n=1")
    monitor = Monitor(plan, reference=1000.0, dark=10.0)
    e = monitor.feed(0.0, 1200.0)
    assert any("outside [0, 1]" in m for m in e.messages) and e.thickness_nm == 0.0
    e = monitor.feed(0.5, 2.0)      # below the dark reading
    assert any("outside [0, 1]" in m for m in e.messages) or e.status == "dropout"


def test_bad_rows_and_time_going_back_are_skipped(metal_plan):
    monitor = Monitor(metal_plan, reference=1000.0)
    monitor.feed(0.0, 1000.0)
    bad = monitor.feed(0.5, None, problem="line 3: the reading 'x' is not a number")
    assert bad.status == "bad row" and "not a number" in bad.messages[0]
    assert monitor.feed(0.5, 995.0).status == "ok"
    back = monitor.feed(0.2, 990.0, line=4)
    assert back.status == "bad row" and "does not follow" in back.messages[0]
    assert monitor.feed(1.0, 990.0).status == "ok"
    assert monitor.counts["bad rows"] == 2


def test_a_single_outlier_does_not_move_the_thickness(metal_plan):
    t = np.arange(0.0, 40.0, 0.5)
    clean = _ramp(metal_plan, t)
    spiky = clean.copy()
    spiky[40] *= 1.3
    a = Monitor(metal_plan, baseline_s=5.0)
    b = Monitor(metal_plan, baseline_s=5.0)
    ea = [a.feed(t[i], clean[i]) for i in range(t.size)]
    eb = [b.feed(t[i], spiky[i]) for i in range(t.size)]
    assert eb[40].status == "outlier"
    # The running median of five removes a single outlier exactly on a monotone signal.
    assert max(abs(x.thickness_nm - y.thickness_nm) for x, y in zip(ea, eb)) < 1e-9


def test_dark_is_subtracted_from_reading_and_reference(metal_plan):
    # reading − dark over reference − dark (common practice for photodiode readings).
    monitor = Monitor(metal_plan, reference=1010.0, dark=10.0)
    assert monitor.feed(0.0, 510.0).ratio == pytest.approx(0.5, abs=1e-15)


def test_one_target_only():
    with pytest.raises(FilmopticError, match="give one target"):
        prepare(QW_STACK, source="laser:633", detector="flat", target_nm=50.0, turning_points=1)
    with pytest.raises(FilmopticError, match="say where to stop"):
        prepare(QW_STACK, source="laser:633", detector="flat")
    with pytest.raises(FilmopticError, match="only spans"):
        prepare(QW_STACK, source="laser:633", detector="flat", stop_ratio=0.2)


def test_stop_at_a_ratio_takes_the_first_crossing():
    plan = prepare(QW_STACK, source="laser:633", detector="flat", stop_ratio=0.9)
    d = plan.target.thickness_nm
    assert plan.model.ratio_at(d) == pytest.approx(0.9, abs=1e-6)
    assert d < plan.model.turning_nm[0]
    second = prepare(QW_STACK, source="laser:633", detector="flat", stop_ratio=0.9, solution=2)
    assert plan.model.turning_nm[0] < second.target.thickness_nm < plan.model.turning_nm[1]


# ------------------------------------------------------------------------------------------------
# Rows
# ------------------------------------------------------------------------------------------------


def test_rows_header_columns_by_name():
    reader = RowReader()
    assert reader.parse("# logger v2", 1) is None
    assert reader.parse("reading; reference; time", 2) is None
    row = reader.parse("812,5; 400; 10:00:01", 3)
    assert (row.t_s, row.reading, row.reference_reading) == (36001.0, 812.5, 400.0)


def test_rows_clock_rolls_over_midnight():
    reader = RowReader()
    assert reader.parse("23:59:59.5 100", 1).t_s == pytest.approx(86399.5)
    assert reader.parse("00:00:00.5 99", 2).t_s == pytest.approx(86400.5)


def test_rows_date_and_time_and_bad_cells():
    reader = RowReader()
    a = reader.parse("2024-05-01 10:00:00,0.8", 1)
    b = reader.parse("2024-05-01T10:00:02.5,0.7", 2)
    assert b.t_s - a.t_s == pytest.approx(2.5)
    assert "columns" in reader.parse("1,2,3,4,5", 3).problem
    assert reader.parse("2024-05-01 10:00:03,", 4).reading is None


def test_rows_without_a_header_learn_their_layout():
    reader = RowReader()
    assert reader.parse("0.81", 1).t_s is None
    assert "earlier rows had 1" in reader.parse("1.0 0.80", 2).problem


def test_timeless_rows_cannot_be_replayed_without_an_interval(tmp_path, metal_plan):
    from filmoptic.monitor.session import StreamRun
    from filmoptic.monitor.sources import follow_file

    path = tmp_path / "r.txt"
    path.write_text("1000\n990\n")
    run = StreamRun(Monitor(metal_plan, reference=1000.0), follow_file(path, follow=False), live=False)
    with pytest.raises(FilmopticError, match="--interval"):
        list(run)
    run = StreamRun(Monitor(metal_plan, reference=1000.0), follow_file(path, follow=False), live=False,
                    interval_s=0.5)
    assert [e.t_s for e in run] == [0.0, 0.5]
    assert run.ended == "end of input"


def test_a_followed_file_gives_only_complete_lines(tmp_path):
    from filmoptic.monitor.sources import follow_file

    path = tmp_path / "live.csv"
    path.write_bytes(b"t_s,reading\n0,10")
    lines = follow_file(path, poll_s=0.01)
    assert next(lines).text == "t_s,reading"
    assert next(lines) is None                  # "0,10" has no newline yet
    with open(path, "ab") as fh:
        fh.write(b"00\r\n1,990\n")
    assert [next(lines).text, next(lines).text] == ["0,1000", "1,990"]


@pytest.mark.parametrize("text, message", [
    ("serial:", "serial:PORT@BAUD"),
    ("serial:/dev/ttyS0@1234", "standard baud rate"),
    ("  ", "INPUT is empty"),
])
def test_input_spec_errors(text, message):
    from filmoptic.monitor.sources import parse_input

    with pytest.raises(FilmopticError, match=message):
        parse_input(text)


def test_missing_pyserial_is_one_clear_error(monkeypatch):
    import sys

    from filmoptic.monitor.sources import serial_lines

    monkeypatch.setitem(sys.modules, "serial", None)
    with pytest.raises(FilmopticError, match=r"pip install 'filmoptic\[serial\]'"):
        next(serial_lines("/dev/null", 9600))


def test_plan_gives_nm_per_percent_from_the_slope(mirror):
    from filmoptic.monitor.plan import plan_table
    from filmoptic.inverse.solve import Reading, evaluate_condition

    plan, _, sc = mirror
    table = plan_table(plan, sc.MONITOR_RATE_NM_PER_S)
    d = plan.target.thickness_nm
    # Central difference of solve's forward model of the same reading (bare-substrate reference).
    step = 1e-3
    ratio = evaluate_condition(sc.MONITOR_STACK, Reading(0.5, sc.MONITOR_SOURCE, sc.MONITOR_DETECTOR, "bare"),
                               [d - step, d + step])
    slope = (ratio[1] - ratio[0]) / (2 * step)
    assert table.nm_per_percent == pytest.approx(0.01 / abs(slope), rel=1e-3)
    assert table.target_ratio == pytest.approx(float(evaluate_condition(
        sc.MONITOR_STACK, Reading(0.5, sc.MONITOR_SOURCE, sc.MONITOR_DETECTOR, "bare"), [d])[0]), abs=1e-6)
    assert table.time_to_target_s == pytest.approx(d / sc.MONITOR_RATE_NM_PER_S)
    assert math.isfinite(table.nm_per_percent)
