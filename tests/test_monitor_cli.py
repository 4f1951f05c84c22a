"""``filmoptic monitor`` on live streams: a file written while it is followed, standard input, a
serial port (a pseudo-terminal pair), a run killed half-way and resumed, and its errors.

The recorded run is the demo scenario's synthetic semi-mirror run (filmoptic's forward model,
checked against tmm in test_engine_tmm.py, with invented noise, drift, a spark and a dropout).
Every follower runs with a timeout, so no test can hang.
"""

from __future__ import annotations

import json
import os
import signal
import subprocess
import sys
import threading
import time

import numpy as np
import pytest

from conftest import assert_user_error
from filmoptic.demo import scenario as sc
from filmoptic.demo.monitor import _mirror_run, run_rows

ARGS = [sc.MONITOR_STACK, "--source", sc.MONITOR_SOURCE, "--detector", sc.MONITOR_DETECTOR,
        "--luminous-T", f"{100 * sc.MONITOR_TARGET_LUMINOUS_T:g}%", "--dark", f"{sc.MONITOR_DARK_COUNTS:g}"]
JSON_KEYS = {"t_s", "reading", "ratio", "thickness_nm", "rate_nm_per_s", "time_left_s", "target_reached"}


@pytest.fixture(scope="module")
def recording():
    return _mirror_run()


@pytest.fixture(scope="module")
def expected_stop(recording):
    """Where the same recording, fed straight to the API, reaches the target."""
    from filmoptic.monitor.session import Monitor, prepare
    from filmoptic.inverse.solve import Target

    plan = prepare(sc.MONITOR_STACK, source=sc.MONITOR_SOURCE, detector=sc.MONITOR_DETECTOR,
                   conditions=[Target("luminous_T", sc.MONITOR_TARGET_LUMINOUS_T)])
    monitor = Monitor(plan, dark=sc.MONITOR_DARK_COUNTS)
    for i in range(recording.t_s.size):
        if monitor.feed(recording.t_s[i], recording.reading[i], recording.reference_reading[i]).target_reached:
            return monitor.reached_at, plan
    raise AssertionError("the recording never reaches the target")


def _text(recording, start=0, stop=None, header=True):
    lines = ["t_s,reading,reference"] if header else []
    lines += [",".join(row) for row in run_rows(recording, start, stop)]
    return "\n".join(lines) + "\n"


def _json_lines(stdout):
    return [json.loads(line) for line in stdout.splitlines() if line.strip()]


def _check_stop(objects, expected):
    *readings, final = objects
    assert final["final"] is True and final["target_reached"] is True
    assert all(JSON_KEYS <= set(o) for o in readings)
    assert readings[-1]["target_reached"] and not readings[-2]["target_reached"]
    # The same readings give the same stop whatever the input path (within rounding of the CSV).
    assert final["stop_t_s"] == pytest.approx(expected.t_s, abs=1e-9)
    assert final["stop_thickness_nm"] == pytest.approx(expected.thickness_nm, abs=1e-3)


def test_a_file_written_by_another_thread_is_followed(tmp_path, run_cli, recording, expected_stop):
    path = tmp_path / "live.csv"
    path.write_text("")
    rows = _text(recording).splitlines(keepends=True)

    def writer():
        with open(path, "a") as fh:
            for k in range(0, len(rows), 20):
                fh.write("".join(rows[k:k + 20]))
                fh.flush()
                time.sleep(0.01)

    thread = threading.Thread(target=writer, daemon=True)
    thread.start()
    result = run_cli(["monitor", *ARGS, path, "--json", "--timeout", "10s"])
    thread.join(timeout=30)
    assert result.exit_code == 0, result.stderr
    _check_stop(_json_lines(result.stdout), expected_stop[0])


def test_standard_input(recording, expected_stop):
    proc = subprocess.run([sys.executable, "-m", "filmoptic", "monitor", *ARGS, "-", "--json", "--timeout", "20s"],
                          input=_text(recording), capture_output=True, text=True, timeout=120)
    assert proc.returncode == 0, proc.stderr
    _check_stop(_json_lines(proc.stdout), expected_stop[0])


def test_a_serial_port_through_a_pseudo_terminal(recording, expected_stop):
    pytest.importorskip("serial", reason="pyserial is not installed (pip install 'filmoptic[serial]')")
    import pty
    import tty

    from filmoptic.monitor.session import Monitor, StreamRun
    from filmoptic.monitor.sources import open_lines, parse_input

    master, slave = pty.openpty()
    tty.setraw(slave)
    name = os.ttyname(slave)
    data = _text(recording).encode()
    stop = threading.Event()

    def device():
        for k in range(0, len(data), 512):
            if stop.is_set():
                return
            os.write(master, data[k:k + 512])
            time.sleep(0.002)

    thread = threading.Thread(target=device, daemon=True)
    try:
        spec = parse_input(f"serial:{name}@115200")
        monitor = Monitor(expected_stop[1], dark=sc.MONITOR_DARK_COUNTS)
        lines = open_lines(spec)
        assert next(lines) is None          # the port is open (opening it flushes what came before)
        run = StreamRun(monitor, lines, timeout_s=10.0)
        thread.start()
        reached = next((e for e in run if e is not None and e.target_reached), None)
    finally:
        stop.set()
        thread.join(timeout=10)
        os.close(master)
        os.close(slave)
    assert reached is not None
    assert reached.t_s == pytest.approx(expected_stop[0].t_s, abs=1e-9)


def _log_rows(path):
    rows = [line for line in path.read_text().splitlines() if line and not line.startswith(("#", "t_s,"))]
    return [line.split(",") for line in rows]


def test_kill_half_way_and_resume(tmp_path, recording, expected_stop):
    data, log = tmp_path / "run.csv", tmp_path / "run-log.csv"
    half = 400                                  # 80 s of the run, before the target
    data.write_text(_text(recording, 0, half))
    command = [sys.executable, "-m", "filmoptic", "monitor", *ARGS, data, "--log", log, "--json", "--timeout", "20s"]
    first = subprocess.Popen([str(c) for c in command], stdout=subprocess.DEVNULL, stderr=subprocess.PIPE)
    try:
        deadline = time.monotonic() + 60
        while time.monotonic() < deadline:
            if log.exists() and len(_log_rows(log)) >= half:
                break
            time.sleep(0.05)
        assert len(_log_rows(log)) == half
    finally:
        first.send_signal(signal.SIGKILL)
        first.wait(timeout=30)
    before = log.read_text()
    with open(data, "a") as fh:
        fh.write(_text(recording, half, None, header=False))
    second = subprocess.run([str(c) for c in command] + ["--resume"], capture_output=True, text=True, timeout=120)
    assert second.returncode == 0, second.stderr
    final = _json_lines(second.stdout)[-1]
    after = log.read_text()
    # The log was only appended to; every input line is in it once, in order, to the stop.
    assert after.startswith(before) and after.count("# resumed") == 1
    lines = [int(row[9]) for row in _log_rows(log)]
    assert lines == list(range(2, lines[-1] + 1))
    assert _log_rows(log)[-1][8] == "reached"
    # Resumed, the run ends exactly where an uninterrupted one does.
    assert final["target_reached"] and final["stop_t_s"] == pytest.approx(expected_stop[0].t_s, abs=1e-9)


def test_replay_text_output_and_plot(tmp_path, run_cli, recording, expected_stop):
    path, plot = tmp_path / "rec.csv", tmp_path / "run.png"
    path.write_text(_text(recording))
    result = run_cli(["monitor", *ARGS, path, "--replay", "--plot", plot])
    assert result.exit_code == 0, result.stderr
    assert f"Target reached (luminous T = 30.00 %) at t = {expected_stop[0].t_s:.1f} s" in result.stdout
    assert "dropout" in result.stdout and plot.stat().st_size > 10_000


def test_replay_ends_before_the_target_with_exit_3(tmp_path, run_cli, recording):
    path = tmp_path / "short.csv"
    path.write_text(_text(recording, 0, 300))
    result = run_cli(["monitor", *ARGS, path, "--replay", "--json"])
    assert result.exit_code == 3
    final = _json_lines(result.stdout)[-1]
    assert final["final"] and not final["target_reached"] and final["ended"] == "end of input"


def test_replay_at_speed_takes_simulated_time(tmp_path, run_cli, recording):
    path = tmp_path / "two-seconds.csv"
    path.write_text(_text(recording, 0, 11))           # 2.0 s of recording
    start = time.monotonic()
    result = run_cli(["monitor", *ARGS, path, "--replay", "--speed", "4", "--json"])
    # 2 s of recording at 4× real time cannot take less than 0.5 s (a lower bound: the pacing works).
    assert time.monotonic() - start >= 0.5
    assert result.exit_code == 3


def test_on_target_command_and_keep_going(tmp_path, run_cli, recording, expected_stop):
    path, marker = tmp_path / "rec.csv", tmp_path / "shutter.txt"
    path.write_text(_text(recording))
    script = tmp_path / "close_shutter.py"
    script.write_text("import os, pathlib\n"
                      f"with open({str(marker)!r}, 'a') as fh: fh.write(os.environ['FILMOPTIC_THICKNESS_NM'] + '\\n')\n")
    result = run_cli(["monitor", *ARGS, path, "--replay", "--keep-going", "--json",
                      "--on-target", f"{sys.executable} {script}", "--warn-before", "10s"])
    assert result.exit_code == 0, result.stderr
    objects = _json_lines(result.stdout)
    assert objects[-1]["ended"] == "end of input" and objects[-1]["on_target_command_ok"] is True
    assert len(objects) == recording.t_s.size + 1       # every reading, then the summary
    assert float(marker.read_text().split()[0]) == pytest.approx(expected_stop[0].thickness_nm, abs=1e-4)
    assert len(marker.read_text().split()) == 1         # run once
    assert result.stderr.count("CAUTION") == 1 and "interlock" in result.stderr
    warned = [o for o in objects[:-1] if any("to the target" in m for m in o["messages"])]
    assert len(warned) == 1 and 9.0 <= expected_stop[0].t_s - warned[0]["t_s"] <= 11.0


def test_a_failing_on_target_command_exits_4(tmp_path, run_cli, recording):
    path = tmp_path / "rec.csv"
    path.write_text(_text(recording))
    result = run_cli(["monitor", *ARGS, path, "--replay", "--json", "--on-target", f"{sys.executable} -c 'exit(5)'"])
    assert result.exit_code == 4
    assert _json_lines(result.stdout)[-1]["on_target_command_ok"] is False


def test_plan_json_and_plot(tmp_path, run_cli, expected_stop):
    plot = tmp_path / "plan.svg"
    result = run_cli(["monitor", *ARGS, "--plan", "--rate", "4.5nm/min", "--reference", "41250", "--json",
                      "--plot", plot])
    assert result.exit_code == 0, result.stderr
    data = json.loads(result.stdout)
    plan = expected_stop[1]
    assert data["target_nm"] == pytest.approx(plan.target.thickness_nm, abs=1e-9)
    assert data["time_to_target_s"] == pytest.approx(plan.target.thickness_nm / 0.075, abs=1e-9)
    assert data["target_reading"] == pytest.approx(310 + plan.target.ratio * (41250 - 310), abs=1e-6)
    assert {"thickness_nm", "ratio", "time_s"} <= set(data["rows"][0]) and plot.read_text().startswith("<?xml")


def test_plan_of_turning_points(run_cli):
    result = run_cli(["monitor", "TiO2 ? / glass 1mm", "--source", "laser:633", "--detector", "flat",
                      "--turning-points", "2", "--plan"])
    assert result.exit_code == 0, result.stderr
    assert "Stop at 137.3" in result.stdout and "stands still" in result.stdout


@pytest.mark.parametrize("extra, fragments", [
    (["-"], ["say where to stop"]),
    (["-", "--target", "9nm", "--stop-at", "40%"], ["give one target"]),
    (["-", "--luminous-T", "30%", "--speed", "2"], ["--speed belongs to --replay"]),
    (["-", "--luminous-T", "30%", "--resume"], ["--resume continues"]),
    (["--luminous-T", "30%"], ["give INPUT"]),
    (["-", "--luminous-T", "30%", "--rate", "1nm/s"], ["--rate belongs to --plan"]),
    (["x.csv", "--luminous-T", "30%", "--plan"], ["--plan shows what to expect", "INPUT"]),
    (["serial:COM3@1234", "--luminous-T", "30%"], ["standard baud rate"]),
    (["-", "--luminous-T", "30%", "--on-target", "no-such-program-xyz"], ["no program"]),
    (["-", "--luminous-T", "30%", "--window", "soon"], ["--window"]),
    (["-", "--target", "0nm"], ["--target"]),
    (["--turning-points", "0", "--plan"], ["--turning-points"]),
])
def test_mistakes_are_one_line_and_exit_2(run_cli, extra, fragments):
    base = [sc.MONITOR_STACK, "--source", sc.MONITOR_SOURCE, "--detector", sc.MONITOR_DETECTOR]
    assert_user_error(run_cli(["monitor", *base, *extra]), *fragments)


def test_the_log_is_never_overwritten_nor_an_input(tmp_path, run_cli, recording):
    path, log = tmp_path / "rec.csv", tmp_path / "log.csv"
    path.write_text(_text(recording, 0, 50))
    log.write_text("precious\n")
    assert_user_error(run_cli(["monitor", *ARGS, path, "--replay", "--log", log]), "already exists")
    assert_user_error(run_cli(["monitor", *ARGS, path, "--replay", "--log", path]), "input")
    assert_user_error(run_cli(["monitor", *ARGS, path, "--replay", "--log", log, "--resume"]),
                      "not a filmoptic monitor log")
    assert log.read_text() == "precious\n" and path.read_text() == _text(recording, 0, 50)


def test_resume_refuses_a_log_of_another_run(tmp_path, run_cli, recording):
    path, log = tmp_path / "rec.csv", tmp_path / "log.csv"
    path.write_text(_text(recording, 0, 50))
    assert run_cli(["monitor", *ARGS, path, "--replay", "--log", log]).exit_code == 3
    other = ["monitor", *ARGS[:-4], "--target", "12nm", "--dark", "310", path, "--replay", "--log", log, "--resume"]
    assert_user_error(run_cli(other), "another run")


def test_help_reads_like_a_manual(run_cli):
    result = run_cli(["monitor", "--help"])
    assert result.exit_code == 0
    for fragment in ("serial:/dev/ttyUSB0@9600", "--turning-points", "Exit status 3", "--resume", "interlock"):
        assert fragment in result.stdout


def test_a_bad_row_in_a_stream_does_not_stop_the_run(tmp_path, run_cli, recording):
    text = _text(recording, 0, 60).splitlines()
    text.insert(40, "39.000,,")
    path = tmp_path / "rec.csv"
    path.write_text("\n".join(text) + "\n")
    result = run_cli(["monitor", *ARGS, path, "--replay", "--json"])
    objects = _json_lines(result.stdout)
    bad = [o for o in objects[:-1] if o["status"] == "bad row"]
    assert len(bad) == 1 and bad[0]["line"] == 41 and objects[-1]["bad rows"] == 1
    assert np.isfinite(objects[-2]["thickness_nm"])
