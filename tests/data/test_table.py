"""The data layer's numpy tables and its CSV reader, checked against general-purpose libraries:
numpy.unique for coding, and pandas (read_csv, factorize, merge, duplicated) as the oracle for
reading awkward files and for joins. pandas is the library figspec's data layer used before
it read data with numpy alone; these tests pin that both agree."""

import numpy as np
import pandas as pd
import pytest

from figspec.data.csv_source import read_table
from figspec.data.recording import natural_key
from figspec.data.table import (Table, count_missing, factorize, first_of_each, index_in, lookup, missing, numbers, row_codes,
                                whole_number)
from figspec.errors import DataError


@pytest.mark.parametrize("values", [
    np.array([3, 3, 1, 1, 1, 2, 3]),                         # runs, as a sorter writes units
    np.random.default_rng(4).integers(0, 50, 1000),          # shuffled
    np.array(["u10", "u2", "u2", "u10", "a"]),               # text
    np.array([2.5, np.nan, 2.5]),                            # floats (NaN sorts last, as numpy.unique)
])
def test_factorize_agrees_with_numpy_unique(values):
    uniques, codes = factorize(values)
    expected, inverse = np.unique(values, return_inverse=True)
    if values.dtype.kind == "f":
        assert np.array_equal(uniques, expected, equal_nan=True)
    else:
        assert uniques.tolist() == expected.tolist()
    assert codes.tolist() == inverse.reshape(-1).tolist()
    assert np.array_equal(uniques[codes], values, equal_nan=values.dtype.kind == "f")


def test_lookup_finds_values_dense_sparse_and_text():
    dense = np.arange(100, 200)
    assert lookup(dense, np.array([99, 100, 150, 199, 200])).tolist() == [-1, 0, 50, 99, -1]
    sparse = np.array([-(10 ** 15), 3, 10 ** 15])            # a range too wide for a table: bisection
    assert lookup(sparse, np.array([3, 10 ** 15, 4])).tolist() == [1, 2, -1]
    text = np.array(["t1", "t10", "t2"])
    assert lookup(text, np.array(["t2", "t3", "t1"])).tolist() == [2, -1, 0]
    assert lookup(np.array([], dtype=np.int64), np.array([1])).tolist() == [-1]


def test_row_codes_join_like_a_pandas_merge():
    rng = np.random.default_rng(7)
    left = pd.DataFrame({"unit": rng.integers(0, 3, 60), "key": rng.choice(["a", "b", "c", "d"], 60)})
    left = left.drop_duplicates().reset_index(drop=True)
    right = pd.DataFrame({"unit": rng.integers(0, 4, 500), "key": rng.choice(["a", "b", "c", "e"], 500)})
    codes, found = row_codes([left["unit"].to_numpy(), left["key"].to_numpy().astype(str)],
                             [right["unit"].to_numpy(), right["key"].to_numpy().astype(str)])
    merged = right.merge(left.reset_index(), on=["unit", "key"], how="left")
    expected = merged["index"].to_numpy()
    assert np.array_equal(found >= 0, ~np.isnan(expected))
    position = {c: i for i, c in enumerate(codes.tolist())}
    assert [position[c] for c in found[found >= 0].tolist()] == expected[~np.isnan(expected)].astype(int).tolist()


def test_first_of_each_agrees_with_pandas_duplicated():
    frame = pd.DataFrame({"a": [1, 1, 2, 1, 2], "b": ["x", "x", "y", "z", "y"]})
    codes, _ = row_codes([frame["a"].to_numpy(), frame["b"].to_numpy().astype(str)])
    assert (~first_of_each(codes)).tolist() == frame.duplicated().tolist()


def test_numbers_and_missing_fields():
    assert np.array_equal(numbers(np.array(["1.5", " 2 ", "", "n/a", "1e3"])), [1.5, 2.0, np.nan, np.nan, 1000.0],
                          equal_nan=True)
    assert missing(np.array(["a", " ", ""])).tolist() == [False, True, True]
    assert missing(np.array(["a", None, np.nan], dtype=object)).tolist() == [False, True, True]
    assert count_missing(np.array(["a", " ", "", "a"])) == 2 and count_missing(np.array([1.0, np.nan])) == 1
    assert index_in(["u2", "u10", "u1"], np.array(["u1", "u2", "x"])).tolist() == [2, 0, -1]


def test_concat_fills_a_column_some_tables_lack():
    joined = Table.concat([Table({"level": [10.0], "unit": ["u1"]}), Table({"level": [20.0]})])
    assert joined["level"].tolist() == [10.0, 20.0] and joined["unit"].tolist() == ["u1", ""]
    assert joined.to_frame().shape == (2, 2)


PLAN = {"unit": ("unit", ()), "key0": ("trial", ()), "time": ("time", ())}


@pytest.mark.parametrize("text", [
    'unit,trial,time\nu1,1,0.5\nu2,2,0.25\n',                          # plain
    '\ufeffunit,trial,time\r\nu1,1,0.5\r\nu2,2,0.25\r\n',               # a byte-order mark and CRLF (spreadsheet export)
    'unit,trial,time\n"u,1",1,0.5\n"u ""2""",2,0.25\n',                # quoted delimiter and doubled quotes
    'unit,trial,time\nu1,t001,0.5\nu2,t002,0.25\n',                    # text trial ids
    'unit,trial,time\nu1,20261202000000000001,0.5\nu2,2,0.25\n',       # an id too large for int64 stays exact
    'unit,trial,time\nu1,1,0.5\n\nu2,2,0.25\n',                        # a blank line
    'unit,extra,trial,time\nu1,x,1,0.5\nu2,y,2,.25\n',                 # a column not read
])
def test_csv_reader_agrees_with_pandas_read_csv(tmp_path, text):
    path = tmp_path / "s.csv"
    path.write_bytes(text.encode("utf-8"))
    table = read_table(path, PLAN, ("spikes",))
    expected = pd.read_csv(path, dtype={"unit": str, "trial": str}, encoding="utf-8-sig")
    assert table["unit"].tolist() == expected["unit"].tolist()
    assert [str(v) for v in table["key0"].tolist()] == expected["trial"].tolist()
    assert table["time"].tolist() == expected["time"].tolist()


def test_csv_reader_keeps_a_bad_time_as_text_for_the_assembly_to_name(tmp_path):
    path = tmp_path / "s.csv"
    path.write_text("unit,trial,time\nu1,1,0.5\nu2,2,\nu2,3,n/a\n")
    table = read_table(path, PLAN, ("spikes",))
    assert table["time"].tolist() == ["0.5", "", "n/a"] and table["key0"].tolist() == [1, 2, 3]


def test_csv_reader_header_only_is_an_error(tmp_path):
    path = tmp_path / "s.csv"
    path.write_text("unit,trial,time\n")
    with pytest.raises(DataError, match="has a header but no rows"):
        read_table(path, PLAN, ("spikes",))


@pytest.mark.parametrize("text, expected", [("12", 12), (" -3\t", -3), ("\u00b2", None), ("\x1c3", None),
                                            ("\u0663", None), ("1.0", None), ("", None), ("-", None)])
def test_whole_number_reads_what_int_reads_in_ascii(text, expected):
    # Python docs: str.isdigit() is true for superscripts, which int() refuses; figspec asks ASCII digits
    assert whole_number(text) == expected


def test_natural_key_orders_numbers_and_survives_other_digits():
    names = ["u10", "u2", "u\u00b2", "u\u0663", "2"]
    assert sorted(names, key=natural_key) == ["2", "u2", "u10", "u\u00b2", "u\u0663"]
