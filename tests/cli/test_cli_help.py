"""Help of every command: each argument's meaning and default, an example, the exit codes."""

from __future__ import annotations

import argparse
import sys

import pytest

from prepkit.cli import main as cli
from prepkit.cli.main import main
from prepkit.pipeline import demo

COMMANDS = ("template", "check", "run", "watch", "demo")


def _subparsers() -> dict[str, argparse.ArgumentParser]:
    parser = cli._parser()
    action = next(a for a in parser._actions if isinstance(a, argparse._SubParsersAction))
    return dict(action.choices)


def _help(capsys: pytest.CaptureFixture[str], *argv: str) -> str:
    assert main([*argv, "--help"]) == 0
    return capsys.readouterr().out


@pytest.mark.parametrize("command", COMMANDS)
def test_help_gives_an_example_and_the_exit_codes(command: str,
                                                  capsys: pytest.CaptureFixture[str],
                                                  monkeypatch: pytest.MonkeyPatch) -> None:
    monkeypatch.setenv("COLUMNS", "80")  # argparse wraps to the terminal's width
    text = _help(capsys, command)
    assert "example" in text
    assert f"  prepkit {command}" in text  # the example is typed as a command
    codes = text[text.index("exit codes:"):]
    for code, words in ((0, ""), (2, "a problem with the input"), (1, "an internal error")):
        assert f"  {code}    {words}" in codes, codes
    assert max(len(line) for line in text.splitlines()) <= 80


@pytest.mark.parametrize("command", COMMANDS)
def test_every_argument_says_what_it_means_and_its_default(command: str) -> None:
    parser = _subparsers()[command]
    for action in parser._actions:
        if isinstance(action, argparse._HelpAction):
            continue
        assert action.help and len(action.help) > 20, (command, action.dest)
        if action.option_strings or action.nargs == "?":
            assert "(default: " in action.help, (command, action.dest)


def test_demo_help_names_its_default_folder(capsys: pytest.CaptureFixture[str]) -> None:
    assert cli.DEMO_OUTDIR == demo.DEMO_OUTDIR
    assert f"(default: {demo.DEMO_OUTDIR} in the current folder)" in " ".join(
        _help(capsys, "demo").split())


def test_scheduler_example_says_its_host_is_a_placeholder(
    capsys: pytest.CaptureFixture[str],
) -> None:
    text = _help(capsys, "run")
    assert "--scheduler tcp://SCHEDULER-HOST:8786" in text
    assert "SCHEDULER-HOST stands for the machine running your Dask scheduler" in text


def test_watch_help_says_ctrl_c_ends_it_with_0(capsys: pytest.CaptureFixture[str]) -> None:
    text = _help(capsys, "watch")
    assert "  0    stopped with Ctrl-C" in text
    assert "130" not in text


def test_help_does_not_load_the_model() -> None:
    import subprocess

    code = ("import sys; from prepkit.cli.main import main; main(['demo', '--help']); "
            "print('numba' in sys.modules, 'prepkit.pipeline.run' in sys.modules)")
    done = subprocess.run([sys.executable, "-c", code], capture_output=True, text=True,
                          timeout=60, check=True)
    assert done.stdout.splitlines()[-1] == "False False"


def test_top_level_help_lists_the_commands_and_exit_codes(
    capsys: pytest.CaptureFixture[str],
) -> None:
    text = _help(capsys)
    for command in COMMANDS:
        assert command in text
    assert "prepkit COMMAND --help" in text and "exit codes:" in text
