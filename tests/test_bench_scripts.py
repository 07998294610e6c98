"""The bench/ scripts still run against today's code (tiny sizes; they time nothing here)."""

import runpy
import sys

import pytest

from helpers import ROOT


@pytest.mark.parametrize("script, args", [("compute_tables.py", ["--spikes", "20000", "--trials", "10", "--repeats", "1"]),
                                          ("assemble_recording.py", ["--spikes", "20000", "--repeats", "1"]),
                                          ("psth_spikes.py", ["--spikes", "20000", "--repeats", "1", "--no-elephant"]),
                                          ("raster_ticks.py", ["--trials", "20", "--repeats", "1", "--formats", "png"]),
                                          ("read_engine.py", ["--spikes", "20000", "--big", "20000", "--huge", "20000",
                                                              "--nwb-spikes", "20000", "--repeats", "1", "--folder",
                                                              "@TMP@"]),
                                          ("many_specs.py", ["--spikes", "20000", "--specs", "2", "--repeats", "1",
                                                             "--folder", "@TMP@"])])
def test_bench_script_runs(script, args, monkeypatch, capsys, tmp_path):
    args = [str(tmp_path) if a == "@TMP@" else a for a in args]
    monkeypatch.setattr(sys, "argv", [script, *args])
    monkeypatch.syspath_prepend(str(ROOT / "bench"))
    runpy.run_path(str(ROOT / "bench" / script), run_name="__main__")
    assert "spikes" in capsys.readouterr().out
