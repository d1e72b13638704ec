#!/usr/bin/env python3
"""NHEFS (tests/data/nhefs.csv) written in every data format causeway reads,
by general-purpose libraries (pandas, pyarrow, Python's gzip), into
tests/data/formats/. tests/formats.rs checks that an analysis of each file
gives the same numbers, bit for bit, as the analysis of the CSV.

Only the columns the NHEFS tests use are kept (the graph's eleven variables,
tests/data/nhefs.graph), plus three for the readers alone: `seqn` (the
identifier, a Stata long / Arrow int32), `ht` (height, stored as a 32-bit
float to exercise that type; its values are the CSV's rounded to float32)
and `smoker_group`, text derived here from `smokeintensity` ("light" below
10 cigarettes a day, "moderate" below 20, "heavy" from 20 on; a derived
column, not part of NHEFS). Integral columns are stored in the smallest
integer type that holds them (Stata byte and int; Arrow int8 and int16);
the others as 64-bit floats, whose values are the CSV's exactly (the CSV is
parsed with round-trip precision). Missing values of `wt82_71` are nulls
(Parquet, Arrow) or Stata's system missing `.`.

Files:
- nhefs.csv.gz (gzip, mtime 0), nhefs.csv.zst (zstd through pyarrow's
  codec), nhefs.tsv (tab-separated): the kept columns as CSV text written by
  pandas (floats with the shortest round-trip repr).
- nhefs.parquet (pyarrow, snappy, row groups of 500 rows so that reading
  crosses row groups), nhefs.arrow (Arrow IPC file, `smoker_group`
  dictionary-encoded).
- nhefs-117.dta, nhefs-118.dta, nhefs-119.dta (pandas to_stata;
  `smoker_group` a str# column, and in 117 and 118 also `smoker_group_l`, the
  same text as a strL), nhefs-114.dta (an older format version, read too).
- nhefs-labelled.dta (118): `sex` with the value labels 0 "male",
  1 "female" and `race` with 0 "white", 1 "black or other" (NHEFS codes).
- nhefs-120.dta: the first 2048 bytes of nhefs-118.dta with its release
  number changed to 120, a version that does not exist (refused).

Run from the repository root:  python3 tests/scripts/make_format_fixtures.py
(after `pip install numpy pandas pyarrow`). Made with numpy 2.4.6,
pandas 3.1.1, pyarrow 26.0.1; the versions are also written to
tests/data/formats/versions.json.
"""
import datetime
import gzip
import json
import os
import warnings

import numpy as np
import pandas as pd
import pyarrow as pa
import pyarrow.ipc
import pyarrow.parquet as pq

STAMP = datetime.datetime(2026, 1, 1)
HERE = os.path.dirname(os.path.abspath(__file__))
ROOT = os.path.dirname(os.path.dirname(HERE))
SRC = os.path.join(ROOT, "tests", "data", "nhefs.csv")
OUT = os.path.join(ROOT, "tests", "data", "formats")

GRAPH = ["qsmk", "wt82_71", "sex", "race", "age", "education", "smokeintensity",
         "smokeyrs", "exercise", "active", "wt71"]
BYTE = ["qsmk", "sex", "race", "education", "exercise", "active"]
INT = ["age", "smokeintensity", "smokeyrs"]


def frame():
    # Correctly rounded parsing, so that every float is the CSV's exactly.
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")
        d = pd.read_csv(SRC, float_precision="round_trip")
    d = d[["seqn"] + GRAPH + ["ht"]].copy()
    for c in BYTE:
        assert d[c].notna().all() and (d[c] == d[c].round()).all()
        d[c] = d[c].astype(np.int8)
    for c in INT:
        assert d[c].notna().all() and (d[c] == d[c].round()).all()
        d[c] = d[c].astype(np.int16)
    d["seqn"] = d["seqn"].astype(np.int32)
    d["ht"] = d["ht"].astype(np.float32)
    s = d["smokeintensity"]
    d["smoker_group"] = np.where(s < 10, "light", np.where(s < 20, "moderate", "heavy"))
    d["smoker_group"] = d["smoker_group"].astype(object)
    return d


def text(d, sep):
    return d.to_csv(index=False, sep=sep, lineterminator="\n", float_format=None)


def main():
    os.makedirs(OUT, exist_ok=True)
    d = frame()
    csv = text(d, ",").encode()
    with open(os.path.join(OUT, "nhefs.csv.gz"), "wb") as f:
        with gzip.GzipFile(fileobj=f, mode="wb", mtime=0, filename="") as g:
            g.write(csv)
    with open(os.path.join(OUT, "nhefs.csv.zst"), "wb") as f:
        f.write(pa.compress(csv, codec="zstd", asbytes=True))
    with open(os.path.join(OUT, "nhefs.tsv"), "w") as f:
        f.write(text(d, "\t"))

    table = pa.Table.from_pandas(d, preserve_index=False)
    table = table.set_column(
        table.schema.get_field_index("smoker_group"), "smoker_group",
        pa.array(d["smoker_group"].tolist(), type=pa.string()))
    pq.write_table(table, os.path.join(OUT, "nhefs.parquet"), row_group_size=500,
                   compression="snappy")
    dict_table = table.set_column(
        table.schema.get_field_index("smoker_group"), "smoker_group",
        pa.array(d["smoker_group"].tolist(), type=pa.string()).dictionary_encode())
    with pa.OSFile(os.path.join(OUT, "nhefs.arrow"), "wb") as sink:
        with pa.ipc.new_file(sink, dict_table.schema) as w:
            w.write_table(dict_table, max_chunksize=700)

    for version in (117, 118, 119):
        e = d.copy()
        strl = []
        if version < 119:
            e["smoker_group_l"] = e["smoker_group"]
            strl = ["smoker_group_l"]
        e.to_stata(os.path.join(OUT, f"nhefs-{version}.dta"), write_index=False,
                   version=version, convert_strl=strl, time_stamp=STAMP)
    d.to_stata(os.path.join(OUT, "nhefs-114.dta"), write_index=False, version=114,
               time_stamp=STAMP)
    d.to_stata(os.path.join(OUT, "nhefs-labelled.dta"), write_index=False, version=118,
               time_stamp=STAMP, value_labels={"sex": {0: "male", 1: "female"},
                             "race": {0: "white", 1: "black or other"}})
    with open(os.path.join(OUT, "nhefs-118.dta"), "rb") as f:
        b = f.read()
    assert b"<release>118</release>" in b[:64]
    with open(os.path.join(OUT, "nhefs-120.dta"), "wb") as f:
        f.write(b[:64].replace(b"<release>118</release>", b"<release>120</release>") + b[64:2048])

    versions = {"numpy": np.__version__, "pandas": pd.__version__, "pyarrow": pa.__version__}
    with open(os.path.join(OUT, "versions.json"), "w") as f:
        json.dump(versions, f, indent=2)
        f.write("\n")
    print(versions)


if __name__ == "__main__":
    main()
