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
