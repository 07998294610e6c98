"""One recording, stored the ways labs store it, gives the same numbers.

The recording is made here (tests only): 4 levels x 12 trials in a shuffled order, one trial
every 600 ms with a jittered onset, spike times exact to the microsecond, some exactly on bin
edges, trials and a whole level without spikes for one unit, string unit ids, trial numbers that
restart at every level, spike rows shuffled. It is written as CSV in four clock layouts (times
relative to onset; to each trial's start; on the session clock with a trial column; on the
session clock without one), as Parquet, as NWB and as a sorter's sample arrays (at 1 MHz), and every copy must give byte-identical rate
tables and stimulus windows, and the same spikes (the trial ids are each layout's own), equal to
a direct integer computation: count = #{spikes with floor((t - onset) / bin) = i} (numpy).
"""

from datetime import datetime, timezone

import numpy as np
import pandas as pd
import pytest

from figspec import pipeline
from figspec.output.files import table_bytes

LEVELS = [0, 20, 40, 60]
PER_LEVEL = 12
PERIOD_US, BIN_US = 600_000, 5_000
WINDOW = (-100, 200)            # ms


def make_truth(seed=7):
    rng = np.random.default_rng(seed)
    level = np.repeat(LEVELS, PER_LEVEL)
    rng.shuffle(level)
    n = level.size
    start = np.arange(n) * PERIOD_US + 1_000_000                 # session clock, µs
    onset = start + 200_000 + rng.integers(0, 10_000, n)          # jittered onsets
    trial_in_level = pd.Series(level).groupby(level).cumcount().to_numpy() + 1
    rows = []
    for unit, gain in (("cell-07", 1.0), ("cell-12", 0.5)):
        for i in range(n):
            if unit == "cell-12" and level[i] == 0:
                continue                                            # a silent level for this unit
            k = rng.poisson(2 + gain * level[i] / 10)
            rel = rng.integers(-150_000, 380_000, k)                  # µs from onset, inside the trial
            rel[: k // 3] = (rel[: k // 3] // BIN_US) * BIN_US        # some exactly on bin edges
            rows += [(unit, i, int(r)) for r in rel]
    spikes = pd.DataFrame(rows, columns=["unit", "row", "rel_us"])
    trials = pd.DataFrame({"level": level, "trial_in_level": trial_in_level, "start_us": start,
                           "onset_us": onset, "offset_us": onset + 50_000, "stop_us": start + PERIOD_US})
    return spikes, trials


def s(us):
    return [f"{v / 1e6:.6f}" for v in us]


def ms(us):
    return [f"{v / 1e3:.3f}" for v in us]


def write_layouts(folder, spikes, trials, rng):
    """{layout name: source table text for the spec} after writing the files."""
    t = trials.iloc[spikes["row"]].reset_index(drop=True)
    key = {"level": t["level"], "trial_in_level": t["trial_in_level"]}
    session_us = spikes["rel_us"] + t["onset_us"]
    shuffled = rng.permutation(len(spikes))
    out = {}

    def write(name, spike_frame, trial_frame):
        spike_frame.iloc[shuffled].to_csv(folder / f"{name}_spikes.csv", index=False)
        trial_frame.to_csv(folder / f"{name}_trials.csv", index=False)

    trial_key = trials[["level", "trial_in_level"]]
    write("aligned", pd.DataFrame({"unit": spikes["unit"], **key, "t": ms(spikes["rel_us"])}), trial_key)
    out["aligned"] = 'time_unit = "ms"\nclock = "aligned"\n' + _keyed("aligned")
    write("trial", pd.DataFrame({"unit": spikes["unit"], **key, "t": ms(session_us - t["start_us"])}),
          trial_key.assign(onset=ms(trials["onset_us"] - trials["start_us"]), stop=ms(trials["stop_us"] - trials["start_us"])))
    out["trial"] = 'time_unit = "ms"\nclock = "trial"\n' + _keyed("trial", onset="onset", stop="stop")
    ids = [f"T{i:03d}" for i in range(len(trials))]
    write("session", pd.DataFrame({"unit": spikes["unit"], "trial": [ids[r] for r in spikes["row"]], "t": s(session_us)}),
          trials[["level"]].assign(trial=ids, onset=s(trials["onset_us"]), start=s(trials["start_us"]),
                                   stop=s(trials["stop_us"])))
    session_cols = ('clock = "session"\nspike_columns = { unit = "unit", trial = "trial", time = "t" }\n'
                    'trial_columns = { trial = "trial", level = "level", onset = "onset", start = "start", stop = "stop" }\n')
    out["session"] = f'spikes = "session_spikes.csv"\ntrials = "session_trials.csv"\n{session_cols}'
    write("sorter", pd.DataFrame({"unit": spikes["unit"], "t": s(session_us)}),
          trials[["level"]].assign(onset=s(trials["onset_us"]), start=s(trials["start_us"]), stop=s(trials["stop_us"]),
                                   trial=ids))
    out["sorter"] = ('spikes = "sorter_spikes.csv"\ntrials = "sorter_trials.csv"\nclock = "session"\nassign_spikes = "by_time"\n'
                     'spike_columns = { unit = "unit", time = "t" }\n'
                     'trial_columns = { trial = "trial", level = "level", onset = "onset", start = "start", stop = "stop" }\n')
    pd.read_csv(folder / "session_spikes.csv", dtype=str).astype({"t": float}).to_parquet(folder / "p_spikes.parquet", row_group_size=50)
    pd.read_csv(folder / "session_trials.csv", dtype={"trial": str}).to_parquet(folder / "p_trials.parquet")
    out["parquet"] = f'format = "parquet"\nspikes = "p_spikes.parquet"\ntrials = "p_trials.parquet"\n{session_cols}'
    sorted_folder = folder / "sorted"                  # a sorter's arrays: samples at 1 MHz (1 sample = 1 µs)
    sorted_folder.mkdir()
    np.save(sorted_folder / "spike_samples.npy", session_us.to_numpy()[shuffled].astype(np.int64))
    np.save(sorted_folder / "spike_units.npy", spikes["unit"].to_numpy()[shuffled].astype(str))
    out["samples"] = ('format = "sample_arrays"\nfolder = "sorted"\nsampling_rate_hz = 1000000\n'
                      'trials = "sorter_trials.csv"\n'
                      'trial_columns = { trial = "trial", level = "level", onset = "onset", start = "start", stop = "stop" }\n')
    write_nwb(folder / "rec.nwb", spikes, trials, session_us)
    out["nwb"] = ('format = "nwb"\nfile = "rec.nwb"\nunit_names = "unit_name"\n'
                  'trial_columns = { level = "level", onset = "onset" }\n')
    return out


def _keyed(name, **times):
    cols = ", ".join(f'{k} = "{v}"' for k, v in times.items())
    return (f'spikes = "{name}_spikes.csv"\ntrials = "{name}_trials.csv"\n'
            'spike_columns = { unit = "unit", trial = ["level", "trial_in_level"], time = "t" }\n'
            f'trial_columns = {{ trial = ["level", "trial_in_level"], level = "level"{", " + cols if cols else ""} }}\n')


def write_nwb(path, spikes, trials, session_us):
    pynwb = pytest.importorskip("pynwb")
    nwb = pynwb.NWBFile(session_description="figspec layout test", identifier="layouts",
                        session_start_time=datetime(2026, 1, 1, tzinfo=timezone.utc))
    for column in ("level", "onset"):
        nwb.add_trial_column(name=column, description=column)
    for r in trials.itertuples():
        nwb.add_trial(start_time=r.start_us / 1e6, stop_time=r.stop_us / 1e6, level=float(r.level), onset=r.onset_us / 1e6)
    nwb.add_unit_column(name="unit_name", description="unit name")
    for unit in sorted(spikes["unit"].unique()):
        times = (session_us[spikes["unit"] == unit] / 1e6).to_numpy()
        nwb.add_unit(spike_times=times[::-1], unit_name=unit)          # unsorted within the unit, on purpose
    with pynwb.NWBHDF5IO(str(path), "w") as io:
        io.write(nwb)


# the stimulus and the source, filled in with .format(source=...): shared by the specs below
STIMULUS_AND_SOURCE = """[stimulus]
start_ms = 0
stop_ms = 50
[sources.rec]
{source}
"""

SPEC = """[levels]
unit = "dB SPL"
""" + STIMULUS_AND_SOURCE + """[[panels]]
name = "spikes"
kind = "raster"
unit = "cell-12"
window_ms = [{a}, {b}]
[[panels]]
name = "rate"
kind = "psth"
units = ["cell-07", "cell-12"]
repeat = "unit"
arrange = "overlay"
window_ms = [{a}, {b}]
bin_ms = 5
measure = "count"
"""


@pytest.fixture(scope="module")
def computed(tmp_path_factory):
    folder = tmp_path_factory.mktemp("layouts")
    spikes, trials = make_truth()
    sources = write_layouts(folder, spikes, trials, np.random.default_rng(3))
    out = {}
    for name, source in sources.items():
        spec = folder / f"{name}.toml"
        spec.write_text(SPEC.format(source=source, a=WINDOW[0], b=WINDOW[1]))
        out[name] = pipeline.compute(pipeline.check(spec)).for_export()
    return spikes, trials, out


def test_every_layout_and_format_gives_the_same_rate_table_byte_for_byte(computed):
    _, _, out = computed
    reference = table_bytes(out["session"]["rate"])
    assert {name: table_bytes(t["rate"]) == reference for name, t in out.items()} == dict.fromkeys(out, True)
    stim = table_bytes(out["session"]["stimulus"])
    assert all(table_bytes(t["stimulus"]) == stim for t in out.values())


def test_every_layout_gives_the_same_spikes_in_the_same_rows(computed):
    _, _, out = computed
    reference = table_bytes(out["session"]["spikes"].drop(columns="trial"))
    assert all(table_bytes(t["spikes"].drop(columns="trial")) == reference for t in out.values())


def test_counts_equal_a_direct_integer_computation(computed):
    spikes, trials, out = computed
    level = trials["level"].to_numpy()[spikes["row"]]
    for unit in ("cell-07", "cell-12"):
        mine = spikes["unit"] == unit
        rel = spikes["rel_us"][mine].to_numpy()
        inside = (rel >= WINDOW[0] * 1000) & (rel < WINDOW[1] * 1000)
        bins = (rel[inside] - WINDOW[0] * 1000) // BIN_US               # exact integer binning
        table = out["sorter"]["rate"]
        table = table[table["unit"] == unit]
        for lv in LEVELS:
            expected = np.bincount(bins[level[mine][inside] == lv], minlength=(WINDOW[1] - WINDOW[0]) * 1000 // BIN_US)
            got = table[table["level"] == lv]["count"].to_numpy()
            np.testing.assert_array_equal(got, expected)
        assert set(table["n_trials"]) == {PER_LEVEL}                     # silent trials and levels counted


def test_trial_numbers_that_restart_per_level_are_told_apart(computed):
    _, _, out = computed
    trials = out["aligned"]["spikes"]["trial"].astype(str)
    assert trials.str.fullmatch(r"\d+/\d+").all()                       # level/trial-in-level
    assert out["aligned"]["spikes"].groupby("level")["row"].max().tolist() == [PER_LEVEL - 1] * len(LEVELS)


def test_aligning_to_another_event_moves_spikes_and_draws_the_stimulus_where_it_falls(tmp_path):
    trials = pd.DataFrame({"trial": [1, 2], "level": [10, 20], "onset": [1.000, 2.000], "offset": [1.050, 2.050],
                           "reward": [1.200, 2.230]})
    spikes = pd.DataFrame({"unit": "u", "trial": [1, 2], "t": [1.210, 2.240]})
    trials.to_csv(tmp_path / "t.csv", index=False)
    spikes.to_csv(tmp_path / "s.csv", index=False)
    spec = tmp_path / "reward.toml"
    spec.write_text('[stimulus]\nper_trial = true\n[sources.r]\nspikes = "s.csv"\ntrials = "t.csv"\nclock = "session"\n'
                    'align = "reward"\nspike_columns = { unit = "unit", trial = "trial", time = "t" }\n'
                    'trial_columns = { trial = "trial", level = "level", onset = "onset", offset = "offset", '
                    'events = { reward = "reward" } }\n[[panels]]\nname = "spikes"\nkind = "raster"\n'
                    'window_ms = [-300, 100]\n')
    tables = pipeline.compute(pipeline.check(spec)).for_export()
    assert tables["spikes"].sort_values("level")["time_ms"].tolist() == [10.0, 10.0]
    stim = tables["stimulus"].sort_values("level")
    assert stim["start_ms"].tolist() == [-200.0, -230.0] and stim["stop_min_ms"].tolist() == [-150.0, -180.0]


def test_a_finer_tick_keeps_sub_microsecond_times_apart():
    from figspec.data.assemble import Layout, assemble
    from figspec.spec.sources import CsvSource

    spikes = pd.DataFrame({"unit": "u", "key0": "1", "time": ["0.0000010", "0.0000015"]})
    trials = pd.DataFrame({"key0": ["1"], "level": [1.0]})
    fine = assemble(spikes, trials, Layout(where="t", locs={}, ticks_per_second=2_000_000))
    assert fine.ticks.tolist() == [2, 3] and fine.ticks_per_ms == 2000
    with pytest.raises(ValueError, match="whole ticks"):
        CsvSource.model_validate({"spikes": "s", "trials": "t", "tick_us": 3})


def test_a_tab_separated_file_reads_with_its_delimiter(tmp_path):
    pd.DataFrame({"unit": ["u", "u"], "trial": [1, 2], "t": [0.01, 0.02]}).to_csv(tmp_path / "s.tsv", sep="\t", index=False)
    pd.DataFrame({"trial": [1, 2], "level": [10, 20]}).to_csv(tmp_path / "t.tsv", sep="\t", index=False)
    spec = tmp_path / "tsv.toml"
    spec.write_text('[stimulus]\nstart_ms = 0\nstop_ms = 50\n[sources.r]\nspikes = "s.tsv"\ntrials = "t.tsv"\n'
                    'delimiter = "\\t"\nspike_columns = { unit = "unit", trial = "trial", time = "t" }\n'
                    '[[panels]]\nname = "spikes"\nkind = "raster"\n')
    tables = pipeline.compute(pipeline.check(spec)).for_export()
    assert tables["spikes"]["time_ms"].tolist() == [10.0, 20.0]


SUMMARY_SPEC = """[levels]
unit = "dB SPL"
scale = "pressure_db"
""" + STIMULUS_AND_SOURCE + """[[panels]]
name = "response"
kind = "level_response"
units = ["cell-07", "cell-12"]
error = "bootstrap"
resamples = 200
[[panels]]
name = "latency"
kind = "latency"
units = ["cell-07", "cell-12"]
response_ms = [0, 100]
resamples = 200
"""


def test_bootstrap_intervals_follow_the_trials_not_the_spelling_of_their_keys(tmp_path):
    # The same recording as CSV with text keys ("T000"), CSV with integer keys, CSV with no trial
    # column (spikes assigned by time), CSV keyed by [level, trial-in-level] on the aligned and trial
    # clocks, Parquet and NWB (row ids as keys): every bootstrap interval is identical (fits resample the
    # same per-trial arrays),
    # because trials are resampled in presentation order. (Sorted as text, "T010" < "T002" never
    # happened, but NWB's 0, 1, ... 10 against a CSV's 1, 2, ... 11 did: intervals moved by up to 5.7 ms.)
    import warnings

    from figspec.errors import FigspecWarning

    spikes, trials = make_truth()
    sources = write_layouts(tmp_path, spikes, trials, np.random.default_rng(3))
    numbered = pd.read_csv(tmp_path / "session_spikes.csv")
    numbered["trial"] = numbered["trial"].str[1:].astype(int) + 1
    numbered.to_csv(tmp_path / "int_spikes.csv", index=False)
    t = pd.read_csv(tmp_path / "session_trials.csv")
    t.assign(trial=t["trial"].str[1:].astype(int) + 1).to_csv(tmp_path / "int_trials.csv", index=False)
    sources["integer keys"] = sources["session"].replace("session_spikes", "int_spikes").replace("session_trials",
                                                                                                  "int_trials")
    out = {}
    for name, source in sources.items():
        spec = tmp_path / f"summary_{name.replace(' ', '_')}.toml"
        spec.write_text(SUMMARY_SPEC.format(source=source))
        with warnings.catch_warnings():
            warnings.simplefilter("ignore", FigspecWarning)        # fit statuses: the same everywhere, not the point
            out[name] = pipeline.compute(pipeline.check(spec)).for_export()
    columns = {"response_points": ["unit", "level", "response", "error_low", "error_high", "p"],
               "latency_points": ["unit", "level", "latency_ms", "ci_low_ms", "ci_high_ms"]}
    for table, cols in columns.items():
        reference = table_bytes(out["session"][table][cols])
        differs = [name for name, t in out.items() if table_bytes(t[table][cols]) != reference]
        assert differs == [], table
    ci = out["nwb"]["latency_points"]["ci_high_ms"] - out["nwb"]["latency_points"]["ci_low_ms"]
    assert (ci.dropna() > 0).all()
