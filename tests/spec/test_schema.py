"""The JSON Schema of a spec (for editors) accepts every demo spec, rejects what figspec
rejects in a sample of bad specs, and the shipped copy is the one the models give today.
Validation by the jsonschema library (draft-07)."""

from __future__ import annotations

import json

import jsonschema
import pytest
import tomli

from figspec.spec.loader import load_spec
from figspec.spec.schema import SHIPPED, schema_text
from figspec.errors import SpecError
from helpers import ROOT, SPECS

BAD = ["bin_inf", "bin_negative", "string_number", "string_bool", "unknown_panel_key", "unknown_kind",
       "missing_kind", "figure_array_of_tables", "unknown_top_key", "title_number", "format_unknown",
       "window_three", "png_dpi_high", "colormap_unknown", "tick_us_tiny", "float_png_dpi"]


@pytest.fixture(scope="module")
def validator():
    return jsonschema.Draft7Validator(json.loads(SHIPPED.read_text(encoding="utf-8")))


def test_the_shipped_schema_is_up_to_date_with_the_models():
    assert SHIPPED.read_text(encoding="utf-8") == schema_text(), "run: figspec schema -o figspec/schema/spec.schema.json"


@pytest.mark.parametrize("spec", sorted(SPECS.glob("*.toml")), ids=lambda p: p.stem)
def test_every_demo_spec_is_valid_and_names_the_schema(spec, validator):
    text = spec.read_text(encoding="utf-8")
    assert text.startswith("#:schema ../figspec/schema/spec.schema.json\n")     # taplo's schema directive
    validator.validate(tomli.loads(text))


@pytest.mark.parametrize("name", BAD)
def test_bad_specs_are_rejected_by_the_schema_and_by_figspec(name, validator):
    path = ROOT / "tests" / "bad_inputs" / "specs" / f"{name}.toml"
    with open(path, "rb") as handle:
        data = tomli.load(handle)
    assert list(validator.iter_errors(json.loads(json.dumps(data, default=str)))), f"{name} passes the schema"
    with pytest.raises(SpecError):
        load_spec(path)


def test_the_schema_command_writes_the_shipped_schema(tmp_path, cli):
    ran = cli("schema", "-o", tmp_path / "spec.schema.json")
    assert ran.returncode == 0
    assert (tmp_path / "spec.schema.json").read_text(encoding="utf-8") == SHIPPED.read_text(encoding="utf-8")
