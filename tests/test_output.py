"""Outputs are written atomically and never over an existing file unless forced."""

import pytest

from rheofit.errors import OutputExistsError
from rheofit.output import write_atomic


def test_writes_and_refuses_to_overwrite(tmp_path):
    target = tmp_path / "sub" / "fit.json"
    write_atomic(target, "one")
    assert target.read_text() == "one"
    with pytest.raises(OutputExistsError, match="--force"):
        write_atomic(target, "two")
    assert target.read_text() == "one"
    write_atomic(target, b"three", force=True)
    assert target.read_bytes() == b"three"
    assert [p.name for p in target.parent.iterdir()] == ["fit.json"]  # no temp file left


def test_failed_write_leaves_no_temp_file(tmp_path):
    target = tmp_path / "x.txt"
    with pytest.raises(TypeError):
        write_atomic(target, 12345)  # not text or bytes
    assert list(tmp_path.iterdir()) == []


def test_output_gets_ordinary_permissions(tmp_path):
    import os

    mask = os.umask(0o022)
    try:
        target = write_atomic(tmp_path / "r.html", "x")
    finally:
        os.umask(mask)
    assert target.stat().st_mode & 0o777 == 0o644  # common practice, no source: rw-r--r--
