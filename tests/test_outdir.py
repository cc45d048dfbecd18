"""An output folder belongs to one run: lock, stale locks, outputs of earlier runs, nothing left behind."""

from __future__ import annotations

import json
import os
import socket
import subprocess
import sys
import textwrap
from pathlib import Path

import pytest

from simsurface.errors import InputError
from simsurface.io import write_text_atomic
from simsurface.outdir import (LOCK_FILE, RECORD_FILE, FolderBusy, check_output_folder, claim_folder,
                               completed_identity)

ROOT = str(Path(__file__).resolve().parents[1])


def hold_in_other_process(folder: Path) -> subprocess.Popen:
    """A second process that claims ``folder`` and waits for a line on stdin."""
    code = textwrap.dedent(f"""
        import sys
        from simsurface.outdir import claim_folder
        with claim_folder({str(folder)!r}, command="holder"):
            print("held", flush=True)
            sys.stdin.readline()
    """)
    proc = subprocess.Popen([sys.executable, "-c", code], stdin=subprocess.PIPE, stdout=subprocess.PIPE, text=True,
                            env=dict(os.environ, PYTHONPATH=ROOT))
    assert proc.stdout.readline().strip() == "held"
    return proc


def test_second_run_into_a_held_folder_is_refused_naming_the_owner(tmp_path):
    holder = hold_in_other_process(tmp_path / "out")
    try:
        with pytest.raises(FolderBusy, match=rf"in use by another run \(pid {holder.pid} on host "):
            with claim_folder(tmp_path / "out"):
                pass
    finally:
        holder.communicate("\n")
    with claim_folder(tmp_path / "out"):  # released when the holder ended
        pass
    assert not (tmp_path / "out" / LOCK_FILE).exists()


def test_lock_of_a_killed_process_is_stale_and_taken_over(tmp_path):
    holder = hold_in_other_process(tmp_path / "out")
    holder.kill()
    holder.wait()
    assert json.loads((tmp_path / "out" / LOCK_FILE).read_text())["pid"] == holder.pid  # left behind by kill -9
    with claim_folder(tmp_path / "out", command="next"):
        owner = json.loads((tmp_path / "out" / LOCK_FILE).read_text())
        assert owner["pid"] == os.getpid() and owner["command"] == "next"


def test_lock_file_left_by_another_host_is_refused_with_the_file_to_delete(tmp_path):
    folder = tmp_path / "out"
    folder.mkdir()
    (folder / LOCK_FILE).write_text(json.dumps({"pid": 1, "host": socket.gethostname() + "-elsewhere"}))
    with pytest.raises(FolderBusy, match="another host.*delete"):
        with claim_folder(folder):
            pass


def test_claims_are_reentrant_in_one_process_and_not_inherited_by_forked_children(tmp_path):
    with claim_folder(tmp_path / "out"):
        with claim_folder(tmp_path / "out"):  # the library claims what the command already holds
            pass
        pid = os.fork()
        if pid == 0:  # a forked worker drops the lock it inherited
            try:
                with claim_folder(tmp_path / "out"):
                    pass
            except FolderBusy:
                os._exit(0)  # the parent still holds it: refused, as it must be
            os._exit(1)
        _, status = os.waitpid(pid, 0)
        assert os.WEXITSTATUS(status) == 0


@pytest.mark.parametrize("make,expected", [
    (lambda tmp: "", "the path is empty"),
    (lambda tmp: tmp / "file", "exists and is not a folder"),
    (lambda tmp: tmp / "file" / "sub", "cannot write to"),
    (lambda tmp: "/proc/simsurface-x", "cannot write to"),
], ids=["empty", "a-file", "below-a-file", "proc"])
def test_impossible_output_folders_are_refused_by_name(tmp_path, make, expected):
    (tmp_path / "file").write_text("x")
    with pytest.raises(InputError, match=expected):
        check_output_folder(make(tmp_path), "--out")


def test_failed_run_removes_the_folder_it_created_and_only_that(tmp_path):
    with pytest.raises(RuntimeError):
        with claim_folder(tmp_path / "new" / "out"):
            raise RuntimeError("bad scenario")
    assert not (tmp_path / "new" / "out").exists()
    (tmp_path / "mine").mkdir()
    with pytest.raises(RuntimeError):
        with claim_folder(tmp_path / "mine"):
            raise RuntimeError("bad scenario")
    assert (tmp_path / "mine").is_dir() and not any((tmp_path / "mine").iterdir())


def test_fresh_run_removes_outputs_of_the_run_before_and_resume_keeps_them(tmp_path):
    out = tmp_path / "out"
    with claim_folder(out):
        write_text_atomic(out / "ensemble.png", "old figure")
        write_text_atomic(out / "results.nc", "old results")
    (out / "notes.txt").write_text("the user's own file")
    with claim_folder(out, resume=True):
        write_text_atomic(out / "results.nc", "resumed results")
    assert (out / "ensemble.png").exists()
    with claim_folder(out):
        assert (out / "ensemble.png").exists()  # nothing is removed before the new run writes
        write_text_atomic(out / "results.nc", "new results")
    assert not (out / "ensemble.png").exists()
    assert (out / "results.nc").read_text() == "new results"
    assert (out / "notes.txt").exists()
    assert json.loads((out / RECORD_FILE).read_text())["files"] == ["results.nc"]


def test_completed_identity_is_recorded_and_cleared_by_the_next_run(tmp_path):
    out = tmp_path / "out"
    with claim_folder(out) as claim:
        write_text_atomic(out / "a.txt", "x")
        claim.mark_complete("abc")
    assert completed_identity(out) == "abc"
    with claim_folder(out, resume=True):
        write_text_atomic(out / "a.txt", "y")
        assert completed_identity(out) is None  # an interrupted resume is not complete
