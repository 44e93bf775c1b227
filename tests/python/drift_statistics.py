"""Check descry's drift figures against scipy and the definitions.

usage: drift_statistics.py BASELINE.parquet NEW_LOOKUP.parquet REPORT.json

BASELINE is what `descry check --save-baseline` wrote for the old drop;
NEW_LOOKUP is `descry lookup` of the new drop with the same ruleset;
REPORT is `descry check NEW --baseline BASELINE --format json`. Every
figure of the report's `drift` section is recomputed here from the two
lookup tables and compared:
- rule shares: the z-test p-value equals scipy.stats.chi2_contingency on
  the 2x2 table without continuity correction (scipy 1.17.1);
- labels: chi-square p-value from scipy.stats.chi2_contingency
  (correction=False); PSI from its definition, sum (a - b) ln(a / b) over
  shares, an empty category counted as 0.5 rows (common practice);
- counts and measures: the Kolmogorov-Smirnov statistic from
  scipy.stats.ks_2samp on the samples expanded to rows, and the p-value
  from scipy.stats.kstwobign (the Kolmogorov distribution) at
  sqrt(n1 n2 / (n1 + n2)) * D.
"""

import json
import math
import sys

import numpy as np
import pyarrow.parquet as pq
from scipy import stats

old = pq.read_table(sys.argv[1]).to_pydict()
new = pq.read_table(sys.argv[2]).to_pydict()
drift = json.load(open(sys.argv[3]))["drift"]
meta = json.loads(pq.read_metadata(sys.argv[1]).metadata[b"descry.baseline"])

failures = []


def close(what, got, want, tol=1e-9):
    if got is None or want is None:
        if got != want:
            failures.append(f"{what}: descry {got}, reference {want}")
        return
    if not math.isclose(got, want, rel_tol=tol, abs_tol=tol):
        failures.append(f"{what}: descry {got!r}, reference {want!r}")


def weighted(table, column):
    out = {}
    for v, n in zip(table[column], table["rows"]):
        if v is not None:
            out[v] = out.get(v, 0) + n
    return out


# new and gone values
old_values = set(old["value"])
new_values = {v for v in new["value"] if v not in old_values}
gone = {v for v in old["value"] if v not in set(new["value"])}
if {v["value"] for v in drift["new_values"]} != new_values:
    failures.append("new_values differ")
if {v["value"] for v in drift["gone_values"]} != gone:
    failures.append("gone_values differ")

# rule shares: z-test = chi-square on the 2x2 table without correction
report = json.load(open(sys.argv[3]))
n1, n2 = meta["rows_considered"], report["coverage"]["rows_considered"]
for r in drift["rules"]:
    x1 = next(x for x in meta["rules"] if x["output"] == r["output"])["rows_hit"]
    x2 = next(x for x in report["rules"] if x["output"] == r["output"])["rows_hit"]
    close(f"{r['output']} share_before", r["share_before"], x1 / n1)
    close(f"{r['output']} share_after", r["share_after"], x2 / n2)
    table = np.array([[x1, n1 - x1], [x2, n2 - x2]])
    if (table.sum(axis=0) > 0).all():
        p = stats.chi2_contingency(table, correction=False).pvalue
    else:
        p = 1.0
    close(f"{r['output']} p_value", r["p_value"], float(p), 1e-7)

for label in drift["labels"]:
    b = weighted(old, label["output"])
    a = weighted(new, label["output"])
    cats = [c for c in set(b) | set(a)]
    table = np.array([[b.get(c, 0) for c in cats], [a.get(c, 0) for c in cats]])
    table = table[:, table.sum(axis=0) > 0]
    if table.shape[1] >= 2:
        p = stats.chi2_contingency(table, correction=False).pvalue
    else:
        p = 1.0
    close(f"label {label['output']} p_value", label["p_value"], p, 1e-7)
    bb = np.where(table[0] == 0, 0.5, table[0]).astype(float)
    aa = np.where(table[1] == 0, 0.5, table[1]).astype(float)
    bb, aa = bb / bb.sum(), aa / aa.sum()
    close(f"label {label['output']} psi", label["psi"], float(np.sum((aa - bb) * np.log(aa / bb))))

for shift in drift["counts"] + drift["measures"]:
    col = shift["output"]
    xs = np.repeat([v for v in old[col] if v is not None], [n for v, n in zip(old[col], old["rows"]) if v is not None])
    ys = np.repeat([v for v in new[col] if v is not None], [n for v, n in zip(new[col], new["rows"]) if v is not None])
    if len(xs) == 0 or len(ys) == 0:
        close(f"{col} ks", shift["ks_statistic"], None)
        continue
    d = stats.ks_2samp(xs, ys).statistic
    close(f"{col} ks_statistic", shift["ks_statistic"], float(d), 1e-9)
    en = len(xs) * len(ys) / (len(xs) + len(ys))
    close(f"{col} p_value", shift["p_value"], float(stats.kstwobign.sf(math.sqrt(en) * d)), 1e-7)

if failures:
    print("\n".join(failures))
    sys.exit(1)
print(f"drift agrees: {len(drift['labels'])} labels, {len(drift['counts']) + len(drift['measures'])} distributions")
