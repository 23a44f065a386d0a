"""Suites of jobs: job list, batches, executors, run folder, combining, failure rows, storage options.

The runner's checks are identities: a suite run equals ``simulate.run`` over the same
excitations, and every executor and number of workers gives the same bytes
(DESIGN.md: the same config gives the same bytes whatever the number of workers).
"""

from __future__ import annotations

from pathlib import Path

import numpy as np
import pytest
import xarray as xr

import simulate as ss
from simulate.suite import (
    InProcess, ProcessPool, Storage, collect, open_results, plan_suite, run_batch, run_suite,
)
from simulate.suite.batchfile import read_batch
from simulate.suite.store import RunFolder

from conftest import band_limited_acceleration

#: A three-storey frame with bilinear storeys (strength about 0.15 of the weight at the base).
CASE = """\
title = "suite test frame"
[building]
mass = [3.0e5, 3.0e5, 2.5e5]
height = [4.0, 3.2, 3.2]
stiffness = [4.0e8, 3.2e8, 2.4e8]
{strength}
[analysis]
tail = 0.3
{analysis}
[records]
files = {files}
units = "g"
"""

STRENGTH = "yield_shear = [1.2e6, 1.0e6, 0.7e6]\nhardening = 0.03"


def write_record(path: Path, seed: int, n: int = 300, peak: float = 0.25, dt: float = 0.01) -> Path:
    """Seeded band-limited noise (conftest.band_limited_acceleration, peak in g), two columns time, g."""
    acc = band_limited_acceleration(seed, n, dt, peak=peak)
    t = np.arange(n) * dt
    path.write_text("# invented test record: time (s), acceleration (g)\n"
                    + "\n".join(f"{ti:.4f} {ai:.10f}" for ti, ai in zip(t, acc)) + "\n")
    return path


def write_case(folder: Path, n_records: int = 3, *, strength: str = STRENGTH, analysis: str = "",
               n_steps: int = 300, files: str | None = None) -> Path:
    """``case.toml`` and records ``r01.txt``, ``r02.txt``, ... in ``folder``; returns the config path."""
    folder.mkdir(parents=True, exist_ok=True)
    for k in range(1, n_records + 1):
        write_record(folder / f"r{k:02d}.txt", seed=k, n=n_steps - 37 * (k % 3), peak=0.1 + 0.1 * (k % 3))
    config = folder / "case.toml"
    config.write_text(CASE.format(strength=strength, analysis=analysis, files=files or '["r*.txt"]'))
    return config


def without_creation_time(ds: xr.Dataset) -> xr.Dataset:
    ds = ds.copy()
    ds.attrs.pop("created", None)
    return ds


def assert_same_results(a: xr.Dataset, b: xr.Dataset) -> None:
    """Every variable, coordinate and attribute equal, NaN where NaN (creation time aside)."""
    xr.testing.assert_identical(without_creation_time(a), without_creation_time(b))
    for name, var in a.variables.items():
        if var.dtype.kind == "f":
            np.testing.assert_array_equal(var.values, b[name].values, err_msg=name)


# ------------------------------------------------------------------ jobs
def test_jobs_cover_every_variant_record_and_scale_in_a_fixed_order(tmp_path):
    config = write_case(tmp_path, 3, analysis="scale = [0.5, 1.5]\nlinear_twin = true")
    cfg = ss.load_config(config)
    suite = plan_suite(cfg, batch_size=4)
    ids = [job.id for job in suite.jobs]
    assert ids == [f"{v}/r{k:02d}/{s!r}" for v in ("frame", "linear-twin") for k in (1, 2, 3) for s in (0.5, 1.5)]
    assert [job.label for job in suite.jobs[:2]] == ["r01@0.5", "r01@1.5"]
    # batches hold consecutive jobs of one variant, at most 4, and do not depend on anything else
    assert [b.id for b in suite.batches] == ["frame-00000", "frame-00001", "linear-twin-00000",
                                             "linear-twin-00001"]
    assert [len(b.jobs) for b in suite.batches] == [4, 2, 4, 2]
    again = plan_suite(ss.load_config(config), batch_size=4)
    assert again.job_table() == suite.job_table()
    assert suite.frames["linear-twin"].is_linear and not suite.frames["frame"].is_linear


def test_a_suite_equals_one_run_of_all_excitations(tmp_path):
    """The combined results of a suite in batches equal simulate.run over every excitation at once."""
    config = write_case(tmp_path, 5)
    cfg = ss.load_config(config)
    suite = plan_suite(cfg, batch_size=2)
    folder = run_suite(suite, tmp_path / "run", quiet=True)
    combined = open_results(folder.path)
    whole = ss.run(cfg.frame, cfg.excitations(), **cfg.run_kwargs())
    assert list(combined["record"].values) == [f"r{k:02d}" for k in range(1, 6)]
    assert_same_results(combined.load(), whole)
    combined.close()


def test_process_pool_gives_the_same_bytes_as_one_worker(tmp_path):
    """Two spawned workers (one numba thread each) give results identical to one process."""
    config = write_case(tmp_path / "case", 4)
    suite = plan_suite(ss.load_config(config), batch_size=1)
    one = run_suite(suite, tmp_path / "one", executor=InProcess(), quiet=True)
    with ProcessPool(2) as pool:
        two = run_suite(suite, tmp_path / "two", executor=pool, quiet=True)
    a, b = collect(one.path, tmp_path / "one.nc"), collect(two.path, tmp_path / "two.nc")
    assert_same_results(ss.read_dataset(a["frame"]), ss.read_dataset(b["frame"]))
    for batch in suite.batches:
        x = read_batch(one.batch_path(batch.id))
        y = read_batch(two.batch_path(batch.id))
        assert_same_results(x, y)


def test_scale_factors_scale_each_record(tmp_path):
    """Each record runs at every factor; a linear frame's response scales with the factor
    (linearity, common practice) and each job equals simulate.run of that record and factor."""
    config = write_case(tmp_path, 2, strength="", analysis="scale = [0.5, 2.0]")
    cfg = ss.load_config(config)
    folder = run_suite(plan_suite(cfg, batch_size=3), tmp_path / "run", quiet=True)
    ds = open_results(folder.path).load()
    assert list(ds["record"].values) == ["r01@0.5", "r01@2", "r02@0.5", "r02@2"]
    np.testing.assert_array_equal(ds["scale_factor"].values, [0.5, 2.0, 0.5, 2.0])
    for r, (k, factor) in enumerate([(0, 0.5), (0, 2.0), (1, 0.5), (1, 2.0)]):
        alone = ss.run(cfg.frame, cfg.excitations()[k], **dict(cfg.run_kwargs(scale=factor), scale=factor))
        n = alone.sizes["time"]
        np.testing.assert_array_equal(ds["drift_ratio"].isel(record=r, time=slice(0, n)).values,
                                      alone["drift_ratio"].isel(record=0).values)
    ratio = ds["peak_drift_ratio"].isel(record=1) / ds["peak_drift_ratio"].isel(record=0)
    np.testing.assert_allclose(ratio.values, 4.0, rtol=1e-12)


# ------------------------------------------------------------------ failures
def test_unreadable_record_is_a_failed_row_and_the_rest_runs(tmp_path):
    config = write_case(tmp_path, 2, files='["r01.txt", "broken.txt", "r02.txt"]')
    (tmp_path / "broken.txt").write_text("0.00 0.0\n0.01 abc\n")
    cfg = ss.load_config(config)
    suite = plan_suite(cfg, batch_size=8)
    assert [job.failure is not None for job in suite.jobs] == [False, True, False]
    folder = run_suite(suite, tmp_path / "run", quiet=True)
    ds = open_results(folder.path).load()
    status = [str(s) for s in ds["status"].values]
    assert status[0] == status[2] == "ok"
    assert status[1].startswith("failed: ") and "broken.txt:2" in status[1]
    assert int(ds["n_steps"].values[1]) == 0
    for name in ("displacement", "drift_ratio", "ground_acceleration", "energy_input", "peak_drift_ratio"):
        assert np.isnan(ds[name].isel(record=1).values).all(), name
        assert np.isfinite(ds[name].isel(record=0).values).any(), name
    assert ds["record_source"].values[1].endswith("broken.txt")
    # the readable records are the same as when run without the broken one
    good = ss.run(cfg.frame, [ss.read_record(tmp_path / f"r0{k}.txt", units="g") for k in (1, 2)],
                  **dict(cfg.run_kwargs(), scale=1.0))
    assert_same_results(ds.isel(record=[0, 2]).drop_attrs(), good.drop_attrs())


@pytest.mark.parametrize("compress", [False, True])
def test_written_results_file_equals_the_combined_folder(tmp_path, compress):
    """The results file, written batch by batch with NaN for failed rows and for the steps
    after a short batch's end, reads back identical to open_results of the folder, which
    equals simulate.run over the readable records (xarray.testing.assert_identical)."""
    config = write_case(tmp_path, 5, files='["r01.txt", "r02.txt", "broken.txt", "r03.txt", "r04.txt", '
                                           '"r05.txt"]')
    (tmp_path / "broken.txt").write_text("0.00 0.0\n0.01 abc\n")
    cfg = ss.load_config(config)
    folder = run_suite(plan_suite(cfg, batch_size=2), tmp_path / "run", quiet=True)
    combined = open_results(folder.path).load()
    written = ss.read_dataset(collect(folder.path, tmp_path / "out.nc", compress_histories=compress)["frame"])
    assert_same_results(written, combined)
    assert np.isnan(written["displacement"].isel(record=2).values).all()
    # r01 is the shortest record and sits in a batch of its own length: NaN after its last step
    n = int(written["n_steps"].values[0])
    assert np.isnan(written["displacement"].isel(record=0).values[n:]).all()
    good = ss.run(cfg.frame, [ss.read_record(tmp_path / f"r0{k}.txt", units="g") for k in range(1, 6)],
                  **dict(cfg.run_kwargs(), scale=1.0))
    assert_same_results(written.isel(record=[0, 1, 3, 4, 5]).drop_attrs(), good.drop_attrs())


def test_suite_file_entries_run_with_their_options(tmp_path):
    """[records] suite: each entry is a job read with its own options; an entry scaled by 2 in
    the suite file gives twice the response of a linear frame (linearity, common practice);
    a corrupt entry is a failed row; a changed entry scale is noticed on resume."""
    config = write_case(tmp_path, 2, strength="")
    (tmp_path / "broken.txt").write_text("0.00 0.0\n0.01 abc\n")
    (tmp_path / "set.toml").write_text('[defaults]\nunits = "g"\n[[record]]\nfile = "r01.txt"\n'
                                       '[[record]]\nfile = "broken.txt"\n'
                                       '[[record]]\nfile = "r01.txt"\nname = "r01x2"\nscale = 2.0\n')
    text = config.read_text().replace('files = ["r*.txt"]\nunits = "g"', 'suite = "set.toml"')
    config.write_text(text)
    cfg = ss.load_config(config)
    folder = run_suite(plan_suite(cfg), tmp_path / "run", quiet=True)
    ds = open_results(folder.path).load()
    assert list(ds["record"].values) == ["r01", "broken", "r01x2"]
    assert str(ds["status"].values[1]).startswith("failed: ") and "broken.txt:2" in str(ds["status"].values[1])
    np.testing.assert_allclose(ds["peak_drift_ratio"].values[2], 2.0 * ds["peak_drift_ratio"].values[0],
                               rtol=1e-12)
    (tmp_path / "set.toml").write_text((tmp_path / "set.toml").read_text().replace("scale = 2.0", "scale = 3.0"))
    with pytest.raises(ss.InputError, match="r01.txt changed since the run"):
        RunFolder.prepare(tmp_path / "run", plan_suite(ss.load_config(config)), resume=True)


def test_a_damaged_batch_file_runs_again(tmp_path):
    """A batch file cut short (as a machine crash during the write could leave it) or holding
    other records does not count as finished: the resumed run computes that batch again and
    the results equal those of the first run."""
    config = write_case(tmp_path, 4)
    suite = plan_suite(ss.load_config(config), batch_size=1)
    folder = run_suite(suite, tmp_path / "run", quiet=True)
    first = open_results(folder.path).load()
    cut = folder.batch_path(suite.batches[1].id)
    cut.write_bytes(cut.read_bytes()[: cut.stat().st_size // 2])
    swapped = folder.batch_path(suite.batches[2].id)
    swapped.write_bytes(folder.batch_path(suite.batches[3].id).read_bytes())
    assert folder.finished(check=True) == {suite.batches[0].id, suite.batches[3].id}
    again = run_suite(suite, tmp_path / "run", resume=True, quiet=True)
    assert again.finished(check=True) == {b.id for b in suite.batches}
    assert_same_results(open_results(again.path).load(), first)


def test_no_readable_record_is_a_user_error(tmp_path):
    config = write_case(tmp_path, 0, files='["broken.txt"]')
    (tmp_path / "broken.txt").write_text("# nothing here\n")
    with pytest.raises(ss.RecordError, match="broken.txt"):
        plan_suite(ss.load_config(config))


# ------------------------------------------------------------------ storage
def test_storage_options_reduce_the_histories_only(tmp_path):
    """Envelopes-only, chosen floors and decimated histories: the envelopes stay those of the
    full-rate, all-floor run; the histories kept are exact samples of the full ones."""
    config = write_case(tmp_path, 3)
    cfg = ss.load_config(config)
    full = ss.run(cfg.frame, cfg.excitations(), **cfg.run_kwargs())
    envelope_names = [n for n, v in full.data_vars.items() if "time" not in v.dims]
    for storage in (Storage(keep="envelopes"), Storage(floors=(1, 3)), Storage(decimate=4),
                    Storage(floors=(2,), decimate=3), Storage(decimate=2, precision="single")):
        folder = run_suite(plan_suite(cfg, storage=storage, batch_size=2), tmp_path / f"run{id(storage)}",
                           quiet=True)
        ds = open_results(folder.path).load()
        for name in envelope_names:
            xr.testing.assert_identical(ds[name], full[name])
        if storage.keep == "envelopes":
            assert "time" not in ds.dims
            assert not [n for n, v in ds.data_vars.items() if "time" in v.dims]
            continue
        floors = list(storage.floors or (1, 2, 3))
        want = full.isel(time=slice(None, None, storage.decimate))
        if storage.precision == "single":
            # float32 histories are the double-precision ones rounded once (numpy astype)
            assert ds["displacement"].dtype == np.float32 and ds["energy_input"].dtype == np.float32
            assert "float32" in ds.attrs["history_precision"]
            want = want.assign({n: v.astype(np.float32) for n, v in want.data_vars.items() if "time" in v.dims})
        np.testing.assert_array_equal(ds["time"].values, want["time"].values)
        np.testing.assert_array_equal(ds["ground_acceleration"].values, want["ground_acceleration"].values)
        if storage.floors:
            assert list(ds["history_floor"].values) == floors == list(ds["history_storey"].values)
            got = ds["displacement"].rename(history_floor="floor")
            drift = ds["drift_ratio"].rename(history_storey="storey")
        else:
            got, drift = ds["displacement"], ds["drift_ratio"]
        np.testing.assert_array_equal(got.values, want["displacement"].sel(floor=floors).values)
        np.testing.assert_array_equal(drift.values, want["drift_ratio"].sel(storey=floors).values)


def test_storage_mistakes_name_the_option():
    for storage, words in ((Storage(floors=(4,)), ["floors", "floor 4", "1..3"]),
                           (Storage(decimate=0), ["decimate"]),
                           (Storage(keep="everything"), ["keep", "'everything'"]),
                           (Storage(keep="envelopes", decimate=2), ["decimate", "envelopes"]),
                           (Storage(precision="half"), ["precision", "'half'"]),
                           (Storage(keep="envelopes", precision="single"), ["precision", "envelopes"])):
        with pytest.raises(ss.InputError) as info:
            storage.check(3)
        for word in words:
            assert word in str(info.value)


# ------------------------------------------------------------------ combining
def test_open_results_is_lazy_and_partial_results_need_asking(tmp_path):
    pytest.importorskip("dask")
    config = write_case(tmp_path, 4)
    suite = plan_suite(ss.load_config(config), batch_size=1)
    folder = run_suite(suite, tmp_path / "run", quiet=True)
    ds = open_results(folder.path, lazy=True)
    assert type(ds["displacement"].data).__module__.startswith("dask")
    whole = ds.load()
    ds.close()
    folder.batch_path(suite.batches[1].id).unlink()
    with pytest.raises(ss.InputError, match="1 of 4 analyses have not finished"):
        open_results(folder.path)
    part = open_results(folder.path, partial=True).load()
    assert list(part["record"].values) == ["r01", "r03", "r04"]
    assert_same_results(part, whole.isel(record=[0, 2, 3]))


def test_run_batch_labels_records_by_job(tmp_path):
    """Two jobs of the same record at different factors keep their own labels in one batch."""
    config = write_case(tmp_path, 1, analysis="scale = [1.0, -1.0]")
    suite = plan_suite(ss.load_config(config))
    ds = run_batch(suite.spec(suite.batches[0]))
    assert list(ds["record"].values) == ["r01@1", "r01@-1"]
    np.testing.assert_array_equal(ds["ground_acceleration"].isel(record=0).values,
                                  -ds["ground_acceleration"].isel(record=1).values)


def test_a_folder_that_is_not_a_run_folder_is_refused(tmp_path):
    config = write_case(tmp_path / "case", 1)
    suite = plan_suite(ss.load_config(config))
    busy = tmp_path / "busy"
    busy.mkdir()
    (busy / "notes.txt").write_text("mine")
    with pytest.raises(ss.InputError, match="not a run folder"):
        RunFolder.prepare(busy, suite)
    assert sorted(p.name for p in busy.iterdir()) == ["notes.txt"]


def test_a_run_folder_of_another_version_is_named_as_such(tmp_path):
    """A run folder whose manifest has an older layout is refused with one line saying so,
    and nothing in it is touched."""
    import json

    from simulate.suite.store import MANIFEST

    config = write_case(tmp_path / "case", 1)
    suite = plan_suite(ss.load_config(config))
    folder = run_suite(suite, tmp_path / "run", quiet=True)
    manifest = json.loads((folder.path / MANIFEST).read_text())
    manifest["format"], manifest["software"] = "swaysim run folder 1", "swaysim 0.0.9"
    (folder.path / MANIFEST).write_text(json.dumps(manifest))
    before = sorted(p.name for p in folder.batch_folder.iterdir())
    with pytest.raises(ss.InputError, match=r"another swaysim version \(swaysim 0\.0\.9, layout "
                                            r"'swaysim run folder 1'.*start the suite afresh"):
        RunFolder.prepare(folder.path, suite, resume=True)
    assert sorted(p.name for p in folder.batch_folder.iterdir()) == before
