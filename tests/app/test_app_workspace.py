"""The workspace: atomic, hash-named files and a sqlite catalogue that survives a restart."""

from __future__ import annotations

import os
import sqlite3
from pathlib import Path

import pandas as pd
import pytest

from valuesift.app.workspace import Workspace, options_from_dict, options_to_dict, report_from_dict, report_to_dict
from valuesift.core.intake import ReadOptions, read_table

PRICES = b"Date,QZA01,QZB02,Index Level\n31/01/2020,10,20,1000\n29/02/2020,11,n.a.,1010\n31/03/2020,12,22,990\n"


def test_upload_is_stored_under_content_hashes(tmp_path: Path) -> None:
    ws = Workspace(tmp_path)
    rec = ws.add_upload("../../evil prices.csv", PRICES)
    assert rec.ok and rec.kind == "prices"
    files = sorted(p.relative_to(tmp_path).as_posix() for p in tmp_path.rglob("*") if p.is_file())
    assert f"raw/{rec.sha256}.bin" in files
    assert f"data/{rec.id}.parquet" in files
    assert not any("evil" in f for f in files)           # never a path from the uploaded name
    assert not any(Path(f).name.startswith(".tmp-") for f in files)   # atomic writes leave no temp file
    assert (tmp_path / "raw" / f"{rec.sha256}.bin").read_bytes() == PRICES


def test_catalogue_survives_a_restart(tmp_path: Path) -> None:
    ws = Workspace(tmp_path)
    rec = ws.add_upload("prices.csv", PRICES, ReadOptions(exclude_columns=("Index Level",)))
    direct = read_table(PRICES, name="prices.csv", options=ReadOptions(exclude_columns=("Index Level",)))
    again = Workspace(tmp_path)                        # a new process would see the same
    [r] = again.records()
    assert r.id == rec.id and r.name == "prices.csv" and r.options.exclude_columns == ("Index Level",)
    pf = again.parsed_file(r.id)
    pd.testing.assert_frame_equal(pf.data.reset_index(drop=True), direct.data.reset_index(drop=True),
                                  check_dtype=False)
    assert pf.report.cells_total == direct.report.cells_total
    assert pf.report.cells_dropped == direct.report.cells_dropped
    pd.testing.assert_frame_equal(pf.report.by_reason.astype(str), direct.report.by_reason.astype(str))
    con = sqlite3.connect(tmp_path / "catalogue.sqlite3")
    cols = [r[1] for r in con.execute("PRAGMA table_info(datasets)")]
    con.close()
    for c in ("id", "name", "kind", "sha256", "size", "uploaded_at", "options_json", "report_json"):
        assert c in cols


def test_reread_uses_kept_bytes_and_new_options(tmp_path: Path) -> None:
    ws = Workspace(tmp_path)
    rec = ws.add_upload("prices.csv", PRICES)
    n_raw = len(list((tmp_path / "raw").iterdir()))
    new = ws.reread(rec.id, ReadOptions(exclude_columns=("Index Level",)))
    assert new.id != rec.id
    assert [r.id for r in ws.records()] == [new.id]
    assert len(list((tmp_path / "raw").iterdir())) == n_raw
    assert "Index Level" not in set(ws.parsed_file(new.id).data["security"])
    assert "Index Level" in set(read_table(PRICES, name="prices.csv").data["security"])


def test_failed_upload_keeps_its_error_and_leaves_others_intact(tmp_path: Path) -> None:
    ws = Workspace(tmp_path)
    good = ws.add_upload("prices.csv", PRICES)
    bad = ws.add_upload("empty.csv", b"")
    assert not bad.ok and bad.error and "empty.csv" in bad.error
    assert ws.get(good.id).ok and ws.parsed_file(good.id).data.shape[0] > 0
    with pytest.raises(KeyError):
        ws.parsed_file(bad.id)


def test_delete_removes_unshared_files(tmp_path: Path) -> None:
    ws = Workspace(tmp_path)
    rec = ws.add_upload("prices.csv", PRICES)
    ws.delete(rec.id)
    assert ws.records() == []
    assert not any((tmp_path / "raw").iterdir()) and not any((tmp_path / "data").iterdir())


def test_remove_can_be_undone_until_it_is_purged(tmp_path: Path) -> None:
    from valuesift.app.workspace import UNDO_S, SharedDatasetError

    ws = Workspace(tmp_path)
    shared = ws.add_upload("shared prices.csv", PRICES.replace(b"QZA01", b"QZC03"))
    assert shared.ok
    rec = ws.add_upload("prices.csv", PRICES, owner="s1")
    ws.remove(rec.id, owner="s1")
    assert [r.id for r in ws.records(owner="s1")] == [shared.id]     # no longer listed, read or found
    with pytest.raises(KeyError):
        ws.get(rec.id)
    assert ws.find_upload(PRICES, owner="s1") is None
    with pytest.raises(KeyError):                                      # another session cannot bring it back
        ws.restore(rec.id, owner="s2")
    with pytest.raises(SharedDatasetError):                            # shared data stays read-only
        ws.remove(shared.id, owner="s1")
    back = Workspace(tmp_path).restore(rec.id, owner="s1")             # after a restart within the undo time too
    assert back.id == rec.id and ws.parsed_file(rec.id).data.shape[0] > 0
    # removed again and left beyond the undo time: deleted for good with its files
    ws.remove(rec.id, owner="s1", now=1_000.0)
    assert ws.purge_removed(now=1_000.0 + UNDO_S + 1) == 1
    with pytest.raises(KeyError):
        ws.restore(rec.id, owner="s1")
    assert not (tmp_path / "data" / f"{rec.id}.parquet").exists()
    assert not (tmp_path / "raw" / f"{rec.sha256}.bin").exists()


def test_options_and_report_round_trip() -> None:
    o = ReadOptions(kind="prices", exclude_columns=("A", "B"), header_row=3, date_order="dmy")
    assert options_from_dict(options_to_dict(o)) == o
    rep = read_table(PRICES, name="prices.csv").report
    back = report_from_dict(report_to_dict(rep))
    assert back.first_date == rep.first_date and back.notes == rep.notes and back.cells_total == rep.cells_total


def test_settings_are_kept(tmp_path: Path) -> None:
    ws = Workspace(tmp_path)
    ws.set_setting("selection", {"ids": ["a"], "splits": []})
    assert Workspace(tmp_path).get_setting("selection") == {"ids": ["a"], "splits": []}
    assert os.path.exists(tmp_path / "catalogue.sqlite3")


def test_identical_upload_is_found_with_its_reading_choices(tmp_path: Path) -> None:
    ws = Workspace(tmp_path)
    first = ws.add_upload("prices.csv", PRICES, owner="s1")
    chosen = ws.reread(first.id, ReadOptions(exclude_columns=("Index Level",)), owner="s1")
    assert chosen.ok
    again = ws.find_upload(PRICES, owner="s1")
    assert again is not None and again.id == chosen.id
    assert again.options.exclude_columns == ("Index Level",)          # the exclusion is kept, not dropped
    assert len(ws.records(owner="s1")) == 1
    assert ws.find_upload(PRICES + b"31/04/2020,13,23,980\n", owner="s1") is None
    assert ws.find_upload(PRICES, owner="s2") is None                 # another session's file is not shared


def test_user_data_folder_per_platform(monkeypatch: pytest.MonkeyPatch, tmp_path: Path) -> None:
    from valuesift.app.workspace import user_data_dir

    assert user_data_dir({"XDG_DATA_HOME": str(tmp_path)}, "linux") == tmp_path / "valuesift"
    assert user_data_dir({}, "linux") == Path.home() / ".local" / "share" / "valuesift"
    assert user_data_dir({"LOCALAPPDATA": str(tmp_path)}, "win32") == tmp_path / "ValueSift"
    assert user_data_dir({}, "darwin") == Path.home() / "Library" / "Application Support" / "ValueSift"


def test_demo_files_are_added_once_and_a_restart_keeps_the_users_choices(tmp_path: Path) -> None:
    from valuesift.app.server import load_demo

    ws = Workspace(tmp_path)
    ids = load_demo(ws)
    assert len(ids) == 6 and len(ws.records()) == 6
    ws.set_setting("selection", {"ids": ids[:2], "splits": []})        # the user's own choice
    again = load_demo(Workspace(tmp_path))                              # the next start
    assert again == ids and len(Workspace(tmp_path).records()) == 6
    assert Workspace(tmp_path).get_setting("selection")["ids"] == ids[:2]


def test_serve_demo_uses_the_persistent_workspace(monkeypatch: pytest.MonkeyPatch, tmp_path: Path) -> None:
    import waitress

    import valuesift.app.server as server_mod

    seen: list[Path] = []
    monkeypatch.setattr(server_mod, "DEFAULT_WORKSPACE", tmp_path / "ws")
    def fake_app(ws: Path, **_: object) -> object:
        seen.append(Path(ws))
        app = server_mod.dash.Dash()
        app.server.config["MAX_CONTENT_LENGTH"] = 1024
        return app

    monkeypatch.setattr(server_mod, "create_app", fake_app)
    monkeypatch.setattr(waitress, "serve", lambda *a, **k: None)
    server_mod.serve(port=8998, demo=True)
    server_mod.serve(port=8998, demo=True, workspace=str(tmp_path / "mine"))
    assert seen == [tmp_path / "ws", tmp_path / "mine"]


def test_a_reading_that_leaves_nothing_usable_fails_and_keeps_the_earlier_reading(tmp_path: Path) -> None:
    from valuesift.app.components.intake_view import detected_options, has_overrides

    ws = Workspace(tmp_path)
    first = ws.add_upload("prices.csv", PRICES)
    wrong = ws.reread(first.id, ReadOptions(date_order="mdy"))      # 31/01/2020 is no month/day/year date
    assert not wrong.ok and "nothing in prices.csv could be used" in (wrong.error or "")
    assert "not a date" in (wrong.error or "") and "row 2" in (wrong.error or "")
    assert [r.id for r in ws.records()] == [first.id]                # nothing changed
    assert len(ws.parsed_file(first.id).data) > 0
    opts = ReadOptions(date_order="mdy", layout="wide", exclude_columns=("Index Level",))
    assert has_overrides(opts) and not has_overrides(detected_options(opts))
    assert detected_options(opts).exclude_columns == ("Index Level",)  # left-out columns are not a guess
