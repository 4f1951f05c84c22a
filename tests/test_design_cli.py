"""``filmoptic design`` on the command line: the fixed JSON, the stack it prints, tables, plots,
one-line errors, interruption. Physical checks live in test_design_methods.py and
test_design_tolerance.py; the one used here is the quarter-wave layer of Macleod, *Thin-Film
Optical Filters*, ch. 3: R = ((n0·ns − n1²)/(n0·ns + n1²))² at the design wavelength.
"""

from __future__ import annotations

import json

import pytest

from conftest import assert_user_error

QW = ["design", "n=1.38 ? / n=1.52", "--ambient", "n=1", "--goal", "R 550nm <= 0%", "--tries", "50", "--starts", "2"]
QW_R = ((1.52 - 1.38**2) / (1.52 + 1.38**2)) ** 2


def test_help_documents_the_goal_grammar(run_cli):
    result = run_cli(["design", "--help"])
    assert result.exit_code == 0
    text = " ".join(result.stdout.split())
    for form in ("R 420..680nm <= 0.5%", "mean R 420..680nm <= 0.5%", "T 550nm = 50%", "R 1064nm >= 99%",
                 "luminous-T = 30%", "luminous-R reverse <= 8%", "reflected Lab = 55,0,-25 within 2",
                 "transmitted hex = #8a9a7b within 3", "mean R 420..680nm @0..40deg <= 1%", "weight 3",
                 "--json", "--check-only", "--tolerance", "--systematic", "--min-layer", "--max-total"):
        assert form in text, form


def test_json_has_the_fixed_fields(run_cli):
    result = run_cli([*QW, "--json"])
    assert result.exit_code == 0, result.stderr
    data = json.loads(result.stdout)
    assert {"stack", "layers", "goals", "merit", "tolerance"} <= set(data)
    assert {"material", "thickness_nm"} <= set(data["layers"][0])
    assert {"goal", "achieved", "met"} <= set(data["goals"][0])
    assert data["tolerance"] is None
    assert data["goals"][0]["goal"] == "R 550nm <= 0%"
    assert data["goals"][0]["achieved"] == pytest.approx(QW_R, rel=1e-9)   # Macleod ch. 3
    assert data["layers"][0]["thickness_nm"] == pytest.approx(550 / (4 * 1.38), abs=1e-3)


def test_the_printed_stack_gives_the_same_values_in_other_commands(run_cli):
    data = json.loads(run_cli([*QW, "--json"]).stdout)
    spectrum = json.loads(run_cli(["spectrum", data["stack"], "--wl", "550", "--ambient", "n=1", "--json"]).stdout)
    assert spectrum["R"][0] == data["goals"][0]["achieved"]


def test_tolerance_json_and_check_only(run_cli):
    stack = "n=1.38 99.638nm / n=1.52"
    result = run_cli(["design", stack, "--check-only", "--ambient", "n=1", "--goal", "R 550nm <= 1.264%",
                      "--tolerance", "2%", "--samples", "500", "--json"])
    assert result.exit_code == 0, result.stderr
    data = json.loads(result.stdout)
    assert data["stack"] == stack
    tolerance = data["tolerance"]
    assert {"samples", "yield", "critical_layer"} <= set(tolerance)
    assert tolerance["samples"] == 500 and tolerance["critical_layer"] == 1
    assert 0.5 < tolerance["yield"] < 0.95
    assert [g["goal"] for g in tolerance["goals"]] == ["R 550nm <= 1.264%"]


def test_table_shows_layers_goals_and_yield_in_percent(run_cli):
    result = run_cli(["design", "n=1.38 99.638nm / n=1.52", "--check-only", "--ambient", "n=1",
                      "--goal", "R 550nm <= 1.5%", "--tolerance", "2%", "--samples", "200"])
    assert result.exit_code == 0, result.stderr
    out = result.stdout
    assert "n=1.38 99.638nm / n=1.52" in out
    assert "quarter waves at 550 nm" in out and "1.000" in out
    assert f"{100 * QW_R:.3f} %" in out and "yes" in out
    assert "Yield over 200 simulated runs" in out and "critical layer: 1" in out


def test_goals_file_and_plot(run_cli, tmp_path):
    goals = tmp_path / "goals.txt"
    goals.write_text("# the antireflection\nR 520..580nm <= 1%\n", encoding="utf-8")
    plot = tmp_path / "design.svg"
    result = run_cli(["design", "n=1.38 ? / n=1.52", "--ambient", "n=1", "--goals", goals, "--tries", "50",
                      "--tolerance", "1nm", "--samples", "100", "--plot", plot])
    assert result.exit_code == 0, result.stderr
    assert plot.read_text(encoding="utf-8").lstrip().startswith(("<?xml", "<svg"))
    assert goals.read_text(encoding="utf-8").startswith("# the antireflection")


def test_same_seed_same_output(run_cli):
    args = ["design", "--materials", "TiO2,SiO2", "--on", "glass", "--goal", "R 480..620nm <= 1%",
            "--max-layers", "4", "--tries", "100", "--starts", "2", "--step", "20nm", "--seed", "11", "--json"]
    first, second = run_cli(args), run_cli(args)
    assert first.exit_code == 0, first.stderr
    assert first.stdout == second.stdout


def test_interrupt_prints_the_best_design_so_far(run_cli, monkeypatch):
    import filmoptic.design.designer as designer

    def interrupted(*args, **kwargs):
        raise KeyboardInterrupt

    monkeypatch.setattr(designer, "_grow", interrupted)
    result = run_cli(["design", "--materials", "TiO2,SiO2", "--on", "glass", "--goal", "R 480..620nm <= 0.1%",
                      "--max-layers", "6", "--tries", "100", "--starts", "2", "--step", "20nm", "--json"])
    assert result.exit_code == 0, result.stderr
    assert "interrupted" in result.stderr and len(result.stderr.strip().splitlines()) == 1
    data = json.loads(result.stdout)
    assert data["interrupted"] is True and data["layers"]


def test_dark_designs_get_the_eye_caution(run_cli):
    # Common practice: a filter passing under 10 % of the light is no eye protection unless
    # certified; the command says so once, on stderr.
    result = run_cli(["design", "Cr 60nm / glass 2mm", "--check-only", "--goal", "luminous-T <= 5%", "--json"])
    assert result.exit_code == 0, result.stderr
    assert "CAUTION" in result.stderr and "eye protection" in result.stderr
    json.loads(result.stdout)


@pytest.mark.parametrize("args, fragment", [
    (["design", "TiO2 ? / glass"], "at least one goal"),
    (["design", "TiO2 ? / glass", "--goal", "R 550 <= 1%"], "needs a unit"),
    (["design", "--goal", "R 550nm <= 1%"], "say what to design"),
    (["design", "--on", "glass", "--goal", "R 550nm <= 1%"], "add --materials"),
    (["design", "TiO2 ? / glass", "--check-only", "--goal", "R 550nm <= 1%"], "unknown values"),
    (["design", "TiO2 60nm / glass", "--check-only", "--materials", "SiO2", "--goal", "R 550nm <= 1%"],
     "--check-only leaves"),
    (["design", "TiO2 ? / glass", "--goal", "R 550nm <= 1%", "--systematic", "1%"], "give --tolerance"),
    (["design", "TiO2 ? / glass", "--goal", "R 550nm <= 1%", "--tolerance", "2"], "'2%'"),
    (["design", "TiO2 ? / glass", "--goal", "R 550nm <= 1%", "--plot", "out.gif"], ".png, .svg or .pdf"),
    (["design", "TiO2 ? / glass", "--goals", "no-such-goals.txt"], "no-such-goals.txt"),
    (["design", "TiO2 ? / glass", "--goal", "R 550nm <= 1%", "--min-layer", "ten"], "--min-layer"),
    (["design", "TiO2 ? / Ti", "--goal", "T 550nm <= 1%"], "absorbing half-space"),
    (["design", "--materials", "TiO2,Unobtainium", "--on", "glass", "--goal", "R 550nm <= 1%"], "Unobtainium"),
])
def test_mistakes_are_one_line_with_exit_code_2(run_cli, args, fragment, tmp_path, monkeypatch):
    monkeypatch.chdir(tmp_path)
    assert_user_error(run_cli(args), fragment)


def test_plot_may_not_replace_the_goals_file(run_cli, tmp_path):
    goals = tmp_path / "goals.png"
    goals.write_text("R 550nm <= 1%\n", encoding="utf-8")
    result = run_cli(["design", "n=1.38 ? / n=1.52", "--ambient", "n=1", "--goals", goals, "--plot", goals])
    assert_user_error(result, "input")
    assert goals.read_text(encoding="utf-8") == "R 550nm <= 1%\n"


def test_demo_part_writes_a_report_whose_stack_scores_as_printed(run_cli, tmp_path):
    result = run_cli(["demo", "--only", "design", "--out", tmp_path])
    assert result.exit_code == 0, result.stderr
    report = (tmp_path / "design_report.txt").read_text(encoding="utf-8")
    assert (tmp_path / "design_plot.png").stat().st_size > 0
    assert "yield with every layer within ±3%" in report and "critical layer" in report
    from filmoptic.demo import scenario
    from filmoptic.design import check_design

    stack = next(line.split(": ", 1)[1] for line in report.splitlines() if line.startswith("design: "))
    checked = check_design(stack, scenario.DESIGN_GOALS)
    for goal in checked.goals:
        line = next(l for l in report.splitlines() if l.strip().startswith(f"{goal.goal.text}: ") and "—" in l)
        assert line.endswith("— met") == goal.met, line
