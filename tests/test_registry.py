"""Every registered panel kind works through every layer: validated from a spec, computed,
drawn, written in every format with its source data, legend sentence and statistics rows, and
read by the colour-vision check. A new kind that breaks another layer fails here."""

import json

import pandas as pd
import pytest

from figspec import pipeline
from figspec.registry import PANEL_KINDS
from figspec.spec.panels import PANEL_MODELS

from helpers import SMALL_SPEC, silencing_head, write_spec

KINDS = sorted(PANEL_KINDS)


def test_every_model_of_the_spec_union_has_one_registry_entry():
    tags = sorted(m.model_fields["kind"].annotation.__args__[0] for m in PANEL_MODELS)
    assert tags == KINDS
    assert all(PANEL_KINDS[tag].model is m for tag, m in
               ((m.model_fields["kind"].annotation.__args__[0], m) for m in PANEL_MODELS))


def spec_with_every_kind() -> str:
    """The small spec with one more panel per registered kind, each with only its required keys."""
    text = SMALL_SPEC.replace("[stimulus]", '[levels]\nquantity = "Sound level"\nunit = "dB SPL"\n'
                                            'scale = "pressure_db"\n\n[stimulus]')
    rows = 3                                 # raster and rate span the rows, then three kinds per column
    columns = -(-len(KINDS) // rows) + 2
    text = text.replace("width_mm = 100", f"width_mm = {60 * columns}").replace("height_mm = 120", "height_mm = 200")
    text = text.replace("[stimulus]", f"[layout]\nrows = {rows}\ncolumns = {columns}\n\n[stimulus]")
    text = text.replace('name = "spikes"', f'name = "spikes"\ncell = [1, 1]\nspan = [{rows}, 1]')
    text = text.replace('name = "rate"', f'name = "rate"\ncell = [1, 2]\nspan = [{rows}, 1]')
    for i, kind in enumerate(KINDS):
        units = 'units = "all"' if population(kind) else 'unit = "u2"'
        text += f'\n[[panels]]\nname = "every_{kind}"\nkind = "{kind}"\n{units}\ncell = [{i % rows + 1}, {i // rows + 3}]\n'
    return text


def population(kind: str) -> bool:
    """A kind that shows many units at once (its model takes every unit by default)."""
    return PANEL_KINDS[kind].model.model_fields["units"].default == "all"


@pytest.fixture(scope="module")
def rendered(tmp_path_factory):
    folder = tmp_path_factory.mktemp("kinds")
    result = pipeline.render(write_spec(folder, spec_with_every_kind()), folder / "out", profile="nature")
    return folder / "out", result


def test_every_kind_renders_every_format(rendered):
    out, result = rendered
    assert {p.name for p in result.files} >= {"spec.svg", "spec.pdf", "spec.png"}
    assert all((out / f"spec.{fmt}").stat().st_size > 1000 for fmt in ("svg", "pdf", "png"))


@pytest.mark.parametrize("kind", KINDS)
def test_every_kind_writes_source_data_a_legend_sentence_and_statistics(rendered, kind):
    out, _ = rendered
    data = out / "spec_data"
    tables = [p for p in data.glob(f"every_{kind}*.csv")]
    assert tables and all(len(pd.read_csv(p).columns) > 1 for p in tables)
    legend = (data / "legend.md").read_text().splitlines()
    assert sum(line.startswith(f"- *every_{kind}*:") for line in legend) == 1
    stats = pd.read_csv(data / "statistics.csv")
    trials = stats[(stats["panel"] == f"every_{kind}") & (stats["quantity"] == "n_trials")]
    units = ["u1", "u2", "u3"] if population(kind) else ["u2"]
    assert sorted(trials["level"]) == sorted(list(range(0, 90, 10)) * len(units)) and set(trials["value"]) == {30}
    resolved = json.loads((data / "manifest.json").read_text())["parameters"]["panels_resolved"]
    [panel] = [p for p in resolved if p["name"] == f"every_{kind}"]
    assert (panel["units"] if population(kind) else [panel["unit"]]) == units


def test_the_journal_check_reads_every_kind(rendered):
    _, result = rendered
    assert result.profile is not None
    assert all(f.panel != "figure" or f.rule in ("width", "height") for f in result.findings)


SPLIT_HEAD = silencing_head(height_mm=60) + '\n[[panels]]\nname = "split"\n'


@pytest.mark.parametrize("kind", KINDS)
def test_every_kind_splits_by_conditions_or_refuses_with_a_reason(tmp_path, kind):
    """With conditions, every table of the panel has a condition column and the figure is written;
    a kind that cannot split says why, at the panel's key."""
    from figspec.errors import UserError

    extra = 'group_by = "condition"\nquantity = "threshold"\n' if kind == "unit_distribution" else ""
    units = "" if population(kind) else 'unit = "u02"\nlevels = [40, 80]\n'
    text = SPLIT_HEAD + f'kind = "{kind}"\n{units}{extra}conditions = {{ column = "light" }}\n'
    path = write_spec(tmp_path, text)
    try:
        result = pipeline.render(path, tmp_path / "out")
    except UserError as err:
        assert kind == "population_heatmap" and "panels[0]: a heatmap shows one condition" in str(err)
        return
    tables = [pd.read_csv(p) for p in (tmp_path / "out" / "spec_data").glob("split*.csv")
              if not p.name.endswith("_tests.csv")]
    assert tables and all("condition" in t.columns for t in tables)
    assert {"spec.svg", "spec.pdf", "spec.png"} <= {p.name for p in result.files}
