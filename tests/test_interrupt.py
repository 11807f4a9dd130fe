"""Ctrl-C at any moment ends ``opdplan plan`` with exit status 130 and no new file
(README.md, *Bad input*; the exit status 128 + SIGINT is the POSIX shell convention).
The command runs in a child process that gets SIGINT at several instants: while loading,
while the greedy night is built and while CP-SAT searches."""

from __future__ import annotations

import signal
import subprocess
import sys
import time
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parent.parent
EXIT_SIGINT = 130
WAIT_S = 60.0  # generous: the child must stop long before this


@pytest.mark.parametrize("after_s", [1.0, 3.5, 7.0])
def test_ctrl_c_leaves_nothing(tmp_path, after_s):
    args = [sys.executable, "-c", "from scheduler.cli.main import entry; entry()", "plan",
            "--array", str(ROOT / "catalogs" / "demo_array.toml"), "--config", "medium",
            "--targets", str(ROOT / "catalogs" / "demo_targets.csv"), "--night", "2027-04-18",
            "--time-limit", "30", "--out", str(tmp_path / "p.json"), "--csv",
            str(tmp_path / "p.csv")]  # fmt: skip
    child = subprocess.Popen(args, stdout=subprocess.DEVNULL, stderr=subprocess.PIPE,
                             preexec_fn=lambda: signal.signal(signal.SIGINT, signal.SIG_DFL))
    time.sleep(after_s)
    child.send_signal(signal.SIGINT)
    _, err = child.communicate(timeout=WAIT_S)
    assert child.returncode == EXIT_SIGINT, err.decode()
    assert "Traceback" not in err.decode()
    assert list(tmp_path.iterdir()) == []


def test_ctrl_c_during_an_extension_import_is_an_interruption(monkeypatch, capsys):
    """A compiled module whose import is interrupted raises ImportError chained to the
    KeyboardInterrupt: still exit 130, one line, no traceback (common practice, no
    source: Ctrl-C means stop, whatever was running)."""
    import scheduler.cli.main as cli

    def broken(args, started, console):
        try:
            raise KeyboardInterrupt
        except KeyboardInterrupt as exc:
            raise ImportError("initialization failed") from exc

    monkeypatch.setattr(cli, "_command", lambda name: broken)
    assert cli.main(["windows", "--array", "a", "--config", "c", "--targets", "t",
                     "--night", "2027-04-18"]) == EXIT_SIGINT  # fmt: skip
    assert capsys.readouterr().err.strip() == "opdplan: interrupted; nothing was written"
    monkeypatch.setattr(cli, "_command", lambda name: _raise_value_error)
    with pytest.raises(ValueError):
        cli.main(["windows", "--array", "a", "--config", "c", "--targets", "t",
                  "--night", "2027-04-18"])  # fmt: skip


def _raise_value_error(args, started, console):
    raise ValueError("a bug elsewhere is not hidden")
