"""Spike times as sample indices: the sorter's-folder source (format = "sample_arrays") and
time_unit = "samples" for tables. The reference for where a spike lands is exact rational
arithmetic (Python's fractions.Fraction): a spike at sample k of a recording at fs Hz is at
k/fs s; a bin [a, b) in ms from an onset t0 in s holds it when a <= (k/fs - t0)·1000 < b."""

from fractions import Fraction

import numpy as np
import pandas as pd
import pytest
from hypothesis import given, settings
from hypothesis import strategies as st

from figspec.compute.selection import select
from figspec.compute.trial_counts import level_bin_counts
from figspec.data.assemble import Layout, assemble
from figspec.data.readers import load_source
from figspec.data.ticks import samples_to_ticks
from figspec.errors import DataError
from figspec.spec.sources import CsvSource, SampleArraysSource

# generated spike trains often repeat one time many times: the warning about repeated spike rows
# is figspec working as it should, not what these tests are about
pytestmark = pytest.mark.filterwarnings("ignore:.*spike rows repeat another row")

EDGES_MS = np.arange(-50, 151, 5, dtype=float)


@settings(max_examples=60, deadline=None)
@given(st.lists(st.integers(-1500, 4499).map(lambda j: j if j % 3 else j // 150 * 150), min_size=1, max_size=40),
       st.integers(100, 10 ** 6),
       st.sampled_from([30_000, 20_000, 25_000, 32_000]))
def test_samples_on_a_session_clock_bin_as_exact_arithmetic(offsets, onset_ms, rate):
    # onset in whole ms (written in s), spikes at onset + j samples: every 5-ms edge that is a whole
    # number of samples is hit exactly by some j, and must land in the bin that starts there
    onset_sample = Fraction(onset_ms, 1000) * rate
    assert onset_sample.denominator == 1
    samples = [int(onset_sample) + j for j in offsets]
    spikes = pd.DataFrame({"unit": "u", "time": samples})
    trials = pd.DataFrame({"key0": [1], "level": [10.0], "onset": [f"{onset_ms / 1000:.3f}"],
                           "start": [0.0], "stop": [onset_ms / 1000 + 1.0]})
    layout = Layout(where="test", locs={}, time_unit="samples", trial_time_unit="s", sampling_rate_hz=rate,
                    clock="session", assign="by_time")
    rec = assemble(spikes, trials, layout)
    counts = level_bin_counts(select(rec, "u", (-50, 150)), EDGES_MS)[0]
    rel_ms = [(Fraction(k, rate) - Fraction(onset_ms, 1000)) * 1000 for k in samples]
    inside = [r for r in rel_ms if -50 <= r < 150]
    expected = np.bincount([int((r + 50) // 5) for r in inside], minlength=EDGES_MS.size - 1)
    np.testing.assert_array_equal(counts, expected)


def test_a_sample_is_held_as_the_nearest_tick():
    # 30 kHz: sample 1 is 33.33... µs (held as 33), sample 2 is 66.66... µs (67), sample 3 exactly 100 µs
    ticks = samples_to_ticks(np.array([0, 1, 2, 3, 30_000, 10 ** 11]), 30_000, 1_000_000, "t", (), "here")
    assert ticks.tolist() == [0, 33, 67, 100, 1_000_000, round(Fraction(10 ** 11 * 10 ** 6, 30_000))]
    # a rate that is not a whole number of Hz (a calibrated clock): nearest tick of k * 1e6 / fs
    odd = samples_to_ticks(np.array([1, 29_999]), 29_999.5, 1_000_000, "t", (), "here")
    assert odd.tolist() == [round(1e6 / 29_999.5), round(29_999 * 1e6 / 29_999.5)]


@pytest.mark.parametrize("values, message", [([1.5, 2.0], "sample indices, whole numbers"),
                                             ([-3, 2], "sample indices, >= 0")])
def test_sample_indices_must_be_whole_and_not_negative(values, message):
    with pytest.raises(DataError, match=message):
        samples_to_ticks(np.array(values), 30_000, 1_000_000, "spike times", (), "here")


def write_folder(tmp_path, samples, ids, labels="unit_id\tlabel\tdepth_um\n1\tgood\t100\n2\tnoise\t900\n"):
    folder = tmp_path / "sorted"
    folder.mkdir(exist_ok=True)
    np.save(folder / "spike_samples.npy", np.asarray(samples))
    np.save(folder / "spike_units.npy", np.asarray(ids))
    if labels is not None:
        (folder / "units.tsv").write_text(labels)
    (tmp_path / "trials.csv").write_text("trial,level,onset,start,stop\n1,10,0.1,0,0.5\n2,20,0.6,0.5,1.0\n")
    return folder


SOURCE = {"format": "sample_arrays", "folder": "sorted", "sampling_rate_hz": 1000, "trials": "trials.csv",
          "trial_columns": {"onset": "onset", "start": "start", "stop": "stop"}}


def test_the_folder_reads_as_a_session_clock_table_would(tmp_path):
    # spikes at 150 ms and 700 ms (samples at 1 kHz) of units 1 and 2, against the same spikes in a CSV in s
    write_folder(tmp_path, [150, 700, 120, 620], [1, 1, 2, 2])
    rec = load_source(SampleArraysSource.model_validate(SOURCE), tmp_path, ("sources", "p"))
    (tmp_path / "s.csv").write_text("unit,time\n1,0.150\n1,0.700\n2,0.120\n2,0.620\n")
    table = CsvSource.model_validate({"spikes": "s.csv", "trials": "trials.csv", "clock": "session",
                                      "assign_spikes": "by_time", "spike_columns": {"trial": "trial"},
                                      "trial_columns": SOURCE["trial_columns"]})
    same = load_source(table, tmp_path, ("sources", "c"))
    assert rec.units == same.units == ("1", "2")
    assert rec.ticks.tolist() == same.ticks.tolist() == [50_000, 100_000, 20_000, 20_000]
    assert rec.offsets.tolist() == same.offsets.tolist()


def test_units_chosen_by_label_and_depth(tmp_path):
    write_folder(tmp_path, [150, 700, 120, 620, 130], [1, 1, 2, 2, 3],
                 "unit_id\tlabel\tdepth_um\n1\tgood\t100\n2\tnoise\t900\n3\tgood\t1500\n")
    spec = {**SOURCE, "unit_table": {"file": "units.tsv"}, "keep_units": {"label": "good", "depth_um": {"max": 1000}}}
    rec = load_source(SampleArraysSource.model_validate(spec), tmp_path, ("sources", "p"))
    assert rec.units == ("1",) and rec.unit_choice.kept == ("1",) and rec.unit_choice.of == 3
    assert rec.unit_choice.rule == "label = 'good' and depth_um <= 1000"
    assert set(rec.all_units) == {"1", "2", "3"}


@pytest.mark.parametrize("change, message", [
    ({"ids": [1, 1, 2]}, "holds 4 spike times but spike_units.npy 3 unit ids"),
    ({"samples": [1.5, 700.0, 120.0, 620.0]}, "sample indices, whole numbers"),
    ({"samples": [-1, 700, 120, 620]}, "sample indices, >= 0"),
    ({"labels": "unit_id\tlabel\n8\tgood\n9\tnoise\n", "rule": {"label": "good"}}, "matches a unit of the data"),
    ({"rule": {"label": "excellent"}}, "keep_units keeps no unit"),
    ({"rule": {"quality": "good"}}, "column 'quality' not found in the unit table"),
])
def test_bad_sorter_folders_are_located_errors(tmp_path, change, message):
    folder = write_folder(tmp_path, change.get("samples", [150, 700, 120, 620]), change.get("ids", [1, 1, 2, 2]),
                          change.get("labels", "unit_id\tlabel\tdepth_um\n1\tgood\t100\n2\tnoise\t900\n"))
    spec = {**SOURCE, **({"unit_table": {"file": "units.tsv"}, "keep_units": change["rule"]} if "rule" in change else {})}
    with pytest.raises(DataError, match=message) as info:
        load_source(SampleArraysSource.model_validate(spec), tmp_path, ("sources", "p"))
    assert info.value.problems[0].loc[:2] == ("sources", "p")
    assert folder.exists()


def test_a_file_that_is_not_an_npy_array_is_named(tmp_path):
    folder = write_folder(tmp_path, [150], [1])
    (folder / "spike_samples.npy").write_text("unit,time\n1,0.1\n")
    with pytest.raises(DataError, match="is not a NumPy .npy array file") as info:
        load_source(SampleArraysSource.model_validate(SOURCE), tmp_path, ("sources", "p"))
    assert info.value.problems[0].loc == ("sources", "p", "spike_samples")


@pytest.mark.parametrize("rate", [0, -30000, None])
def test_a_missing_or_non_positive_sampling_rate_is_refused(rate):
    from pydantic import ValidationError

    spec = {**SOURCE, "sampling_rate_hz": rate} if rate is not None else {k: v for k, v in SOURCE.items()
                                                                           if k != "sampling_rate_hz"}
    with pytest.raises(ValidationError):
        SampleArraysSource.model_validate(spec)
    with pytest.raises(ValidationError, match="sampling_rate_hz"):
        CsvSource.model_validate({"spikes": "s.csv", "trials": "t.csv", "time_unit": "samples"})


def test_a_csv_in_samples_reads_whole_numbers_exactly(tmp_path):
    (tmp_path / "s.csv").write_text("unit,trial,spike_sample\nu1,1,3003\nu1,2,33\n")
    (tmp_path / "t.csv").write_text("trial,level\n1,10\n2,20\n")
    src = CsvSource.model_validate({"spikes": "s.csv", "trials": "t.csv", "time_unit": "samples",
                                    "sampling_rate_hz": 30000, "spike_columns": {"time": "spike_sample"}})
    rec = load_source(src, tmp_path, ("sources", "c"))
    assert rec.ticks.tolist() == [100_100, 1_100]        # 3003 / 30 kHz = 100.1 ms; 33 samples = 1.1 ms


def test_a_parquet_table_in_samples_reads_as_the_csv_does(tmp_path):
    import pyarrow as pa
    import pyarrow.parquet as pq

    from figspec.spec.sources import ParquetSource

    pq.write_table(pa.table({"unit": ["u1", "u1"], "trial": [1, 2], "spike_sample": pa.array([3003, 33], pa.int64())}),
                   tmp_path / "s.parquet")
    pq.write_table(pa.table({"trial": [1, 2], "level": [10.0, 20.0]}), tmp_path / "t.parquet")
    src = ParquetSource.model_validate({"format": "parquet", "spikes": "s.parquet", "trials": "t.parquet",
                                        "time_unit": "samples", "sampling_rate_hz": 30000,
                                        "spike_columns": {"time": "spike_sample"}})
    rec = load_source(src, tmp_path, ("sources", "p"))
    assert rec.ticks.tolist() == [100_100, 1_100]
