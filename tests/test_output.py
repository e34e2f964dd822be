"""Outputs are written atomically and never over an existing file unless forced."""

import pytest

from rheofit.errors import OutputExistsError
from rheofit.output import write_atomic


def test_writes_and_refuses_to_overwrite(tmp_path):
    target = tmp_path / "sub" / "fit.json"
    target.parent.mkdir()
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


def test_a_missing_folder_is_refused_not_made(tmp_path):
    from rheofit.errors import OutputPathError
    from rheofit.output import check_target, make_folder

    target = tmp_path / "missing" / "fit.json"
    with pytest.raises(OutputPathError, match=f"the folder '{tmp_path / 'missing'}' does not exist"):
        write_atomic(target, "x")
    with pytest.raises(OutputPathError, match="does not exist"):
        check_target(target, force=True)
    with pytest.raises(OutputPathError, match="does not exist"):
        make_folder(tmp_path / "missing" / "figures")  # only the folder itself is made
    assert not (tmp_path / "missing").exists()
    assert make_folder(tmp_path / "figures").is_dir()


def test_a_folder_or_a_file_in_the_way_is_named_at_once(tmp_path):
    from rheofit.output import check_target, make_folder

    (tmp_path / "results").mkdir()
    with pytest.raises(OutputExistsError, match="is a folder; give the name of a file"):
        check_target(tmp_path / "results", force=True)
    (tmp_path / "plain").write_text("x")
    with pytest.raises(OutputExistsError, match="'.*plain' is a file, not a folder"):
        check_target(tmp_path / "plain" / "deeper" / "fit.json")
    with pytest.raises(OutputExistsError, match="'.*plain' is a file, not a folder"):
        make_folder(tmp_path / "plain")
