"""Every command the command line registers, found from the app itself (never from a list written here): each has
an example in its help that runs as written with the network cut off, each that prints a table has --csv as a flag
that prints it to stdout with snake_case headers, each survives a table of bad option values in one line, and each
renamed option keeps its old name, hidden, for one release (docs: VOCAB; CHANGELOG)."""

from __future__ import annotations

import io
import re
import shlex

import pandas as pd
import pytest
import typer.main
from typer.testing import CliRunner

from navred.cli import FILE_COMMANDS, ORDER, app
from navred.io.cautions import CAUTION

runner = CliRunner()
GROUP = typer.main.get_command(app)
REGISTERED = sorted(GROUP.commands)


def example(name: str) -> list[str]:
    """The arguments of the example in a command's help."""
    found = re.search(r"Example:\s+navred (.+)", GROUP.commands[name].help or "")
    assert found, f"navred {name} --help has no example"
    return shlex.split(found.group(1))


@pytest.fixture
def workplace(tmp_path, monkeypatch):
    """A folder with the samples in it, where a command's example writes its files."""
    from pathlib import Path

    (tmp_path / "sample_sights").symlink_to(Path("sample_sights").resolve())
    monkeypatch.chdir(tmp_path)
    return tmp_path


def test_the_commands_are_the_app_s_own_and_listed_in_order():
    assert len(REGISTERED) >= 18 and set(ORDER) == set(REGISTERED) and set(FILE_COMMANDS) <= set(REGISTERED)
    listed = runner.invoke(app, ["--help"]).stdout
    places = [listed.index(f"\n  {name} ") for name in ORDER]
    assert places == sorted(places)


@pytest.mark.parametrize("name", REGISTERED)
def test_every_command_s_first_sentence_is_shown_whole_in_the_top_level_help(name):
    listed = " ".join(runner.invoke(app, ["--help"]).stdout.split())
    first = " ".join((GROUP.commands[name].short_help or "").split())
    assert first.endswith((".", "?")) and "..." not in first
    assert f"{name} {first}" in listed


@pytest.mark.parametrize("name", REGISTERED)
def test_every_command_has_an_example_that_runs_offline(name, workplace, no_network):
    result = runner.invoke(app, example(name))
    assert result.exit_code == 0, result.output
    assert "Traceback" not in result.output


@pytest.mark.parametrize("name", REGISTERED)
def test_every_command_that_prints_a_table_has_csv_as_a_stdout_flag(name, workplace):
    options = {opt: p for p in GROUP.commands[name].params if p.param_type_name == "option" for opt in p.opts}
    if name in FILE_COMMANDS:
        assert "--csv" not in options  # its work is its files: it prints what it wrote
        return
    assert "--csv" in options and options["--csv"].is_flag, f"navred {name}: --csv must be a flag"
    result = runner.invoke(app, [*example(name), "--csv"])
    assert result.exit_code == 0, result.output
    table = pd.read_csv(io.StringIO(result.stdout))
    assert len(table) >= 1 and CAUTION not in result.stdout and "wrote" not in result.stdout
    # snake_case with units, as the library's tables (the display labels are for sheets and pages)
    assert all(re.fullmatch(r"[a-z][a-z0-9_]*", str(c)) for c in table.columns), list(table.columns)


#: a bad value for an option of each kind (the value given to every option of that kind, one run each)
BAD_VALUES = {"number": "nan", "integer": "0x10", "text": "\x00", "choice": "sideways"}


def _bad_runs():
    for name in REGISTERED:
        for param in GROUP.commands[name].params:
            if param.param_type_name != "option" or param.is_flag or param.hidden:
                continue
            kind = {"float": "number", "int": "integer"}.get(str(param.bare_type()), "text")
            for value in ("", BAD_VALUES[kind]):
                yield pytest.param(name, param.opts[0], value, id=f"{name} {param.opts[0]} {value!r}")


@pytest.mark.parametrize("name, option, value", list(_bad_runs()))
def test_every_option_of_every_command_refuses_a_bad_value_in_one_line(name, option, value, workplace):
    arguments = example(name)
    if option in arguments:
        at = arguments.index(option)
        arguments = arguments[:at] + arguments[at + 2:]
    result = runner.invoke(app, [*arguments, option, value])
    assert result.exit_code in (1, 2), (name, option, value, result.output)
    assert "Traceback" not in result.output and "unexpected failure" not in result.output, result.output
    if result.exit_code == 1:  # navred's own refusal: one line, naming what was wrong
        said = [line for line in result.output.splitlines() if line.startswith("navred: error:")]
        assert len(said) == 1, result.output


def _hidden():
    for name in REGISTERED:
        for param in GROUP.commands[name].params:
            if param.param_type_name == "option" and param.hidden:
                yield pytest.param(name, param.opts[0], id=f"{name} {param.opts[0]}")


@pytest.mark.parametrize("name, old", list(_hidden()))
def test_every_old_option_name_is_hidden_and_listed_in_the_changelog(name, old):
    from pathlib import Path

    shown = runner.invoke(app, [name, "--help"]).stdout
    assert old not in shown.replace("--csv ", "").replace("--csv\n", "") or old == "--csv-file"
    changelog = Path("CHANGELOG.md").read_text(encoding="utf-8")
    form = "--csv FILE" if old == "--csv-file" else old
    assert f"`navred {name} {form}" in changelog or f"`{form}" in changelog, f"CHANGELOG lacks {name} {form}"


# --- each renamed option still works under its old name, with a note ------------------------------------------

RENAMED = [
    (["fix", "sample_sights/demo_sights.csv", "--group", "evening-stars"], "--at", "2026-03-26T19:48:30Z", "--utc"),
    (["plan", "--date", "2026-03-26", "--lat", "44 30 N", "--lon", "012 00 W"], "--at", "2026-03-26T19:30:00Z",
     "--utc"),
    (["plan", "--date", "2026-03-26", "--lat", "44 30 N", "--lon", "012 00 W"], "--sky", "{tmp}/sky.svg", "-o"),
    (["plan", "--date", "2026-03-26", "--lat", "44 30 N", "--lon", "012 00 W"], "--csv", "{tmp}/plan.csv", "-o"),
    (["workbook", "sample_sights/demo_sights.csv", "-o", "{tmp}/v.xlsx", "--pictures", "none"], "--gpx", "{tmp}/v.gpx",
     "-o"),
    (["workbook", "sample_sights/demo_sights.csv", "-o", "{tmp}/v.xlsx", "--pictures", "none"], "--geojson",
     "{tmp}/v.geojson", "-o"),
    (["training", "sample_sights/training_sights.csv", "--track", "sample_sights/training_track.gpx"], "--summary",
     "{tmp}/s.pdf", "-o"),
    (["training", "sample_sights/training_sights.csv", "--track", "sample_sights/training_track.gpx"], "--csv",
     "{tmp}/t.csv", "-o"),
    (["mark", "sample_sights/class_workings.xlsx"], "--pdf", "{tmp}/m.pdf", "-o"),
    (["days", "sample_sights/passage_log.csv"], "--picture", "{tmp}/p.svg", "-o"),
    (["route", "40 30 N", "073 00 W", "49 57 N", "005 12 W"], "--gpx", "{tmp}/r.gpx", "-o"),
    (["route", "40 30 N", "073 00 W", "49 57 N", "005 12 W"], "--geojson", "{tmp}/r.geojson", "-o"),
    (["lunar", "29 44.7", "--other", "Antares", "--utc", "2024-09-12T19:33:00Z", "--lat", "30 N", "--lon", "040 W",
      "--moon-limb", "far"], "--xlsx", "{tmp}/l.xlsx", "-o"),
]


@pytest.mark.parametrize("arguments, old, value, new", RENAMED, ids=[f"{a[0]} {o}" for a, o, _, _ in RENAMED])
def test_an_old_option_name_still_works_with_a_note(arguments, old, value, new, tmp_path):
    value = value.replace("{tmp}", str(tmp_path))
    arguments = [a.replace("{tmp}", str(tmp_path)) for a in arguments]
    before = runner.invoke(app, [*arguments, old, value])
    assert before.exit_code == 0, before.output
    assert f"is now {new}" in before.stderr and "the old name is kept until the next release" in before.stderr
    if "{tmp}" not in value and "/" in value:  # a file: written just as under the new name
        return
    if value.startswith(str(tmp_path)):
        from pathlib import Path

        assert Path(value).exists() and Path(value).stat().st_size > 0
    after = runner.invoke(app, [*arguments, new, value.replace(".", "-new.", 1) if value.startswith(str(tmp_path))
                                else value])
    assert after.exit_code == 0, after.output
    if not value.startswith(str(tmp_path)):  # the same result under either name
        assert after.stdout == before.stdout


def test_both_names_at_once_are_refused():
    result = runner.invoke(app, ["fix", "sample_sights/demo_sights.csv", "--utc", "2026-03-26T19:48:30Z",
                                 "--at", "2026-03-26T19:40:00Z"])
    assert result.exit_code == 1 and "--at is the old name of --utc" in result.output


def test_the_old_csv_file_of_training_is_refused_where_it_could_be_a_log(tmp_path):
    log = tmp_path / "mine.csv"
    log.write_bytes(open("sample_sights/training_sights.csv", "rb").read())
    result = runner.invoke(app, ["training", "sample_sights/training_sights.csv", "--track",
                                 "sample_sights/training_track.gpx", "--csv", str(log)])
    assert result.exit_code == 1 and "--csv is a flag now" in result.output and "put it before --csv" in result.output
    assert log.read_bytes() == open("sample_sights/training_sights.csv", "rb").read()


def test_every_option_the_docs_show_is_one_the_command_takes():
    """Trial finding: sample_sights/README.md told the reader `navred days ... --picture passage.png`, an option
    the help does not list (a hidden old name). Every `navred COMMAND ... --option` written in the README, the
    samples' README, DEVELOPERS.md and docs/ (inline, or a line of a console block) names an option the command
    lists in its help (not hidden)."""
    from pathlib import Path

    files = [Path("README.md"), Path("DEVELOPERS.md"), Path("sample_sights/README.md"), *sorted(Path("docs").glob("*.md"))]
    wrong = []
    for path in files:
        text = path.read_text(encoding="utf-8")
        inline = re.finditer(r"`navred ([a-z-]+)((?: [^`\n]*)?)`", text)
        blocks = re.finditer(r"^\s*(?:\$ )?navred ([a-z-]+)((?: [^\n]*)?)$", text, flags=re.MULTILINE)
        for found in [*inline, *blocks]:
            name = found.group(1)
            if name not in GROUP.commands:
                continue
            shown = {o for p in GROUP.commands[name].params if not getattr(p, "hidden", False)
                     for o in (*p.opts, *getattr(p, "secondary_opts", ()))}
            for option in re.findall(r"(?<![\w-])(--[a-z][a-z0-9-]*)", found.group(2)):
                if option not in shown and option != "--help":
                    wrong.append(f"{path}: navred {name} {option}")
    assert not wrong, wrong
