"""Round two of saving safely: read-only files, mode and owner, hard links, changes that keep the
modification time, every TOML layout the loader accepts, and save-as through a dangling link.

Issue 12, items 10-13 and the save-as case. What "keeps" means comes from POSIX: a file's mode,
owner and link count are in stat(2); rename(2) replaces the directory entry only, so a renamed-in
file has the creator's owner, the creating mode minus the umask and one link. TOML layouts are
those of TOML 1.0 (https://toml.io/en/v1.0.0): dotted keys, inline tables, arrays of inline tables.
"""

from __future__ import annotations

import asyncio
import dataclasses
import os
import shutil
import sys
from pathlib import Path

import pytest

ROOT = Path(__file__).resolve().parents[1]
if str(ROOT) not in sys.path:
    sys.path.insert(0, str(ROOT))

from bench import fuzz_documents as fd  # noqa: E402
from slopetune.engine import BallastItem, load_setup, parse_setup  # noqa: E402
from slopetune.tui import setup_writer  # noqa: E402
from slopetune.tui.setup_writer import (  # noqa: E402
    FileChangedOnDisk, LinkToNowhere, SaveError, save_setup, set_keys,
)

STOCK = fd.SHIPPED_TEXT[0]
ROOT_USER = hasattr(os, "geteuid") and os.geteuid() == 0


def _file(tmp_path, text=STOCK, name="rig.toml") -> Path:
    p = tmp_path / name
    p.write_text(text, encoding="utf-8")
    return p


# ---------------------------------------------------------------- 10: read-only files

def test_a_read_only_file_is_refused_with_how_to_save_elsewhere(tmp_path):
    path = _file(tmp_path)
    path.chmod(0o444)
    before = path.read_bytes()
    loaded = load_setup(path)
    with pytest.raises(SaveError) as err:
        save_setup(loaded, loaded.setup.with_value("rig.mass_g", 2400))
    assert "read-only" in str(err.value) and "another name" in str(err.value) and "\n" not in str(err.value)
    assert path.read_bytes() == before and oct(path.stat().st_mode & 0o777) == "0o444"


def test_measure_write_on_a_read_only_file_is_one_line_exit_2(tmp_path, capsys):
    from slopetune.tui.cli import main

    path = _file(tmp_path)
    path.chmod(0o444)
    code = main(["measure", "bias", "--front", "1300", "--write", str(path)])
    err = capsys.readouterr().err
    assert code == 2 and "read-only" in err and len(err.strip().splitlines()) == 1
    assert path.read_text(encoding="utf-8") == STOCK


def test_ctrl_s_on_a_read_only_file_keeps_the_edit_unsaved(tmp_path):
    from slopetune.tui.app import SlopeTuneApp

    path = _file(tmp_path)
    path.chmod(0o444)

    async def go():
        app = SlopeTuneApp(load_setup(path))
        async with app.run_test(size=(80, 24)) as pilot:
            await pilot.pause()
            await pilot.press("right", "ctrl+s")
            await pilot.pause()
            assert app.title_bar.unsaved and "read-only" in app.status.note[0]
    asyncio.run(go())
    assert path.read_text(encoding="utf-8") == STOCK


# ---------------------------------------------------------------- 11: mode, owner, hard links

def test_mode_is_kept_whatever_the_umask(tmp_path):
    path = _file(tmp_path)
    path.chmod(0o664)
    old = os.umask(0o022)  # would give 0644 to a freshly created file
    try:
        loaded = load_setup(path)
        save_setup(loaded, loaded.setup.with_value("rig.mass_g", 2400))
    finally:
        os.umask(old)
    assert oct(path.stat().st_mode & 0o7777) == "0o664"


@pytest.mark.skipif(not ROOT_USER, reason="giving a file to another user needs root")
def test_root_saving_another_users_file_keeps_its_owner(tmp_path):
    path = _file(tmp_path)
    os.chown(path, 65534, 65534)  # nobody:nogroup (Debian base-passwd)
    loaded = load_setup(path)
    save_setup(loaded, loaded.setup.with_value("rig.mass_g", 2400))
    st = path.stat()
    assert (st.st_uid, st.st_gid) == (65534, 65534)
    assert load_setup(path).setup.rig.mass_g == 2400


def test_a_hard_linked_file_is_refused_and_both_names_keep_the_same_bytes(tmp_path):
    path = _file(tmp_path)
    other = tmp_path / "other-name.toml"
    os.link(path, other)
    loaded = load_setup(path)
    with pytest.raises(SaveError) as err:
        save_setup(loaded, loaded.setup.with_value("rig.mass_g", 2400))
    assert "2 hard links" in str(err.value)
    assert path.stat().st_ino == other.stat().st_ino and path.read_text(encoding="utf-8") == STOCK


# ---------------------------------------------------------------- 12: change detection by content

def test_an_outside_edit_that_keeps_the_mtime_is_noticed(tmp_path):
    path = _file(tmp_path)
    loaded = load_setup(path)
    st = path.stat()
    path.write_text(STOCK.replace("mass_g = 2380", "mass_g = 2390"), encoding="utf-8")
    os.utime(path, ns=(st.st_atime_ns, st.st_mtime_ns))  # what cp -p / rsync -t leave
    assert path.stat().st_mtime_ns == loaded.mtime_ns
    with pytest.raises(FileChangedOnDisk):
        save_setup(loaded, loaded.setup.with_value("rig.cg_height_mm", 90))
    assert "mass_g = 2390" in path.read_text(encoding="utf-8")
    save_setup(loaded, loaded.setup.with_value("rig.cg_height_mm", 90), force=True)


def test_touching_a_file_without_changing_it_is_not_a_change(tmp_path):
    path = _file(tmp_path)
    loaded = load_setup(path)
    os.utime(path, ns=(10**18, 10**18))
    saved = save_setup(loaded, loaded.setup.with_value("rig.cg_height_mm", 90))
    assert saved.sha256 and load_setup(path).sha256 == saved.sha256


# ---------------------------------------------------------------- 13: every layout saves

DOTTED = """schema = 1
name = "dotted" # the name
rig.mass_g = 2380  # scale
rig.wheelbase_mm = 313
rig.front_bias_pct = 57.5
rig.cg_height_mm = 88
rig.track_mm = 252
rig.tire_dia_front_mm = 114
rig.tire_dia_rear_mm = 112
grip.mu_static = 1.0 # tyres
grip.mu_kinetic = 0.8
terrain.slope_deg = 30
"""
INLINE = """schema = 1
name = "inline"
rig = { mass_g = 2380, wheelbase_mm = 313, front_bias_pct = 57.5, cg_height_mm = 88, track_mm = 252, tire_dia_front_mm = 114, tire_dia_rear_mm = 112 } # whole rig
[grip]
mu_static = 1.0
mu_kinetic = 0.8
[terrain]
slope_deg = 30
"""
INLINE_BALLAST = """schema = 1
name = "inline ballast"
[rig]
mass_g = 2380
wheelbase_mm = 313
front_bias_pct = 57.5
cg_height_mm = 88
track_mm = 252
tire_dia_front_mm = 114
tire_dia_rear_mm = 112
ballast = [ # brass
  { name = "knuckles", mass_g = 96, x_mm = 313, z_mm = 40 },  # front
  { name = "links", mass_g = -38, x_mm = 120, z_mm = 45 },
]
[grip]
mu_static = 1.0
mu_kinetic = 0.8
[terrain]
slope_deg = 30
"""
OUT_OF_ORDER = STOCK.replace("[rig]", "[[rig.ballast]]\nname = \"lead\" # first\nmass_g = 10\nx_mm = 100\nz_mm = 30\n\n[rig]")


def _edits(setup):
    lead = BallastItem("lead", 50.0, 100.0, 30.0)
    rig = setup.rig
    return {
        "mass": setup.with_value("rig.mass_g", 2400),
        "add ballast": dataclasses.replace(setup, rig=dataclasses.replace(rig, ballast=rig.ballast + (lead,))),
        "drop ballast": dataclasses.replace(setup, rig=dataclasses.replace(rig, ballast=rig.ballast[:-1])),
        "gears": dataclasses.replace(setup, driveline=dataclasses.replace(
            setup.driveline, overdrive_pct=None, front_stages=((13, 38),), rear_stages=((13, 40),))),
    }


@pytest.mark.parametrize("layout", ["dotted", "inline", "inline ballast", "out of order"])
def test_every_layout_saves_keeping_its_comments(tmp_path, layout):
    text = {"dotted": DOTTED, "inline": INLINE, "inline ballast": INLINE_BALLAST, "out of order": OUT_OF_ORDER}[layout]
    comments = [line[line.index("#"):] for line in text.splitlines() if "#" in line and '"#' not in line]
    for what, new in _edits(parse_setup(text)[0]).items():
        path = _file(tmp_path, text, f"{layout.replace(' ', '-')}-{what.replace(' ', '-')}.toml")
        save_setup(load_setup(path), new)
        saved = path.read_text(encoding="utf-8")
        assert load_setup(path).setup == new, (layout, what, saved)
        # a dropped item's or removed key's own comment goes with it
        lost = [c for c in comments if c not in saved and not (what == "drop ballast" and c in ("# front", "# first"))
                and not (what == "gears" and c.startswith("# front axle turns"))]  # overdrive_pct goes
        assert not lost, (layout, what, lost, saved)


def test_inline_ballast_stays_inline(tmp_path):
    path = _file(tmp_path, INLINE_BALLAST)
    loaded = load_setup(path)
    save_setup(loaded, _edits(loaded.setup)["add ballast"])
    saved = path.read_text(encoding="utf-8")
    assert "[[rig.ballast]]" not in saved and "ballast = [ # brass" in saved and 'name = "lead"' in saved


def test_plan_write_on_dotted_keys_adds_ballast(tmp_path, capsys):
    from slopetune.tui.cli import main

    path = _file(tmp_path, DOTTED)
    code = main(["plan", str(path), "--target", "balance>=20", "--lever", "ballast:x=250,z=40", "--write"])
    out, err = capsys.readouterr()
    assert code == 0 and "Traceback" not in err, err  # balance 14.9 deg now; 500 g there gives 24.1 deg
    assert load_setup(path).setup.rig.ballast and "# scale" in path.read_text(encoding="utf-8")


def test_a_layout_that_would_read_back_different_is_refused_before_writing(tmp_path, monkeypatch):
    path = _file(tmp_path)
    loaded = load_setup(path)
    real = setup_writer.render_setup
    monkeypatch.setattr(setup_writer, "render_setup",
                        lambda ld, s: real(ld, s).replace("mass_g = 2400", "mass_g = 2401"))
    with pytest.raises(SaveError, match="read back different"):
        save_setup(loaded, loaded.setup.with_value("rig.mass_g", 2400))
    assert path.read_text(encoding="utf-8") == STOCK


# ---------------------------------------------------------------- save-as through a dangling link

def test_save_as_through_a_link_to_nowhere_asks_first(tmp_path):
    elsewhere = tmp_path / "elsewhere"
    elsewhere.mkdir()
    link = tmp_path / "link.toml"
    link.symlink_to(elsewhere / "made.toml")
    loaded = load_setup(_file(tmp_path))
    with pytest.raises(LinkToNowhere) as err:
        save_setup(loaded, loaded.setup, link)
    assert "made.toml" in err.value.question and not (elsewhere / "made.toml").exists()
    save_setup(loaded, loaded.setup, link, force=True)
    assert load_setup(elsewhere / "made.toml").setup == loaded.setup and link.is_symlink()


def test_set_keys_still_saves_an_ordinary_file(tmp_path):
    path = _file(tmp_path)
    set_keys(path, {"rig.mass_g": 2400})
    assert load_setup(path).setup.rig.mass_g == 2400 and shutil.which  # the plain path is unchanged
