"""Outputs never destroy anything: every output path is checked before any work, a link
is written through, and a command writes all its files or none.

The rules are the project's contract (README.md, *Bad input* and *Outputs*; common
practice, no source); POSIX file semantics (rename is atomic within a folder, a hard link
is the same file) are facts of the operating system.
"""

from __future__ import annotations

import os
from pathlib import Path

import pytest

from scheduler.cli.main import main
from scheduler.model.errors import Gather
from scheduler.output import files
from scheduler.output.files import check_outputs, write_all

ROOT = Path(__file__).resolve().parent.parent
ARRAY = str(ROOT / "catalogs" / "demo_array.toml")
TARGETS = str(ROOT / "catalogs" / "demo_targets.csv")


def _problems(outputs: dict[str, str | None], inputs: list[str | Path]) -> list[str]:
    g = Gather()
    check_outputs(outputs, inputs, g)
    return [str(p) for p in g.problems]


def test_an_output_equal_to_an_input_is_refused(tmp_path):
    cat = tmp_path / "t.csv"
    cat.write_text("x")
    link = tmp_path / "alias.csv"
    link.symlink_to(cat)
    hard = tmp_path / "hard.csv"
    os.link(cat, hard)
    for given in (cat, link, hard, tmp_path / "." / "t.csv"):
        found = _problems({"--out": str(given)}, [str(cat)])
        assert len(found) == 1 and "never replaces an input" in found[0], found


@pytest.mark.parametrize("kind", ["directory", "special file", "missing folder"])
def test_paths_that_cannot_take_a_file(tmp_path, kind):
    if kind == "directory":
        given, expected = str(tmp_path), "is a directory"
    elif kind == "special file":
        given, expected = os.devnull, "special file"
    else:
        given, expected = str(tmp_path / "nowhere" / "x.json"), "does not exist"
    found = _problems({"--out": given}, [])
    assert len(found) == 1 and expected in found[0], found


def test_two_outputs_on_one_file(tmp_path):
    found = _problems({"--out": str(tmp_path / "a"), "--csv": str(tmp_path / "a")}, [])
    assert len(found) == 1 and "also the output of --out" in found[0]


def test_a_link_is_written_through(tmp_path):
    real = tmp_path / "real.json"
    real.write_text("old")
    link = tmp_path / "link.json"
    link.symlink_to(real)
    g = Gather()
    (out,) = check_outputs({"--out": str(link)}, [], g)
    write_all([(out, b"new")])
    assert link.is_symlink() and real.read_bytes() == b"new"
    assert sorted(p.name for p in tmp_path.iterdir()) == ["link.json", "real.json"]


def test_all_or_none_when_a_rename_fails(tmp_path, monkeypatch):
    """The second rename fails: the first file is put back as it was, no temporary
    file is left."""
    a, b = tmp_path / "a.txt", tmp_path / "b.txt"
    a.write_text("a-old")
    g = Gather()
    outs = check_outputs({"--out": str(a), "--csv": str(b)}, [], g)
    real_replace = os.replace
    calls = []

    def failing(src, dst):
        calls.append(dst)
        if Path(dst) == b:
            raise OSError(28, "No space left on device", str(b))
        return real_replace(src, dst)

    monkeypatch.setattr(files.os, "replace", failing)
    with pytest.raises(OSError):
        write_all([(outs[0], b"a-new"), (outs[1], b"b-new")])
    assert a.read_text() == "a-old" and not b.exists()
    assert sorted(p.name for p in tmp_path.iterdir()) == ["a.txt"]


PLAN = ["plan", "--array", ARRAY, "--config", "medium", "--targets", TARGETS,
        "--night", "2027-04-18", "--solver", "greedy"]  # fmt: skip


@pytest.mark.parametrize("option", ["--out", "--csv", "--plot"])
def test_plan_refuses_to_overwrite_its_inputs_before_any_work(tmp_path, capsys, option):
    """The catalog and the array file given as outputs: exit 2 at once, both intact."""
    cat = tmp_path / "t.csv"
    cat.write_bytes(Path(TARGETS).read_bytes())
    args = [a if a != TARGETS else str(cat) for a in PLAN] + [option, str(cat)]
    before = cat.read_bytes()
    capsys.readouterr()
    assert main(args) == 2
    err = capsys.readouterr().err
    assert "never replaces an input" in err and option in err
    assert cat.read_bytes() == before


def test_plan_with_a_bad_output_folder_writes_nothing(tmp_path, capsys):
    good = tmp_path / "plan.csv"
    code = main(PLAN + ["--csv", str(good), "--out", str(tmp_path / "missing" / "p.json")])
    assert code == 2 and not good.exists()
    assert "does not exist" in capsys.readouterr().err
