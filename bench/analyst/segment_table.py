"""The segment table as an analyst would compute it by hand, for the benchmark's comparison.

Reads the same CSV files `npm run bench` uploads (customers, then the contacts of each
campaign), builds every one-way segment and every two-way cross of age band, region and
channel over all campaigns together, and compares each segment with the rest:

- conversion rate: two-proportion z-test (statsmodels `proportions_ztest`), Wilson intervals for
  both rates (`proportion_confint`), Newcombe's interval for the difference
  (`confint_proportions_2indep`, method 'newcomb');
- revenue per contact: Welch's t-test (SciPy `ttest_ind`, equal_var=False);
- Benjamini-Hochberg adjustment of each metric's p-values over all segments (`multipletests`).

Written the plain way: one boolean mask per segment over every contact, the library calls on
the masked columns. It is a benchmark reference, never part of the service.

    python3 bench/analyst/segment_table.py --customers customers.csv \
        --contacts campaign-1=contacts-1.csv --contacts campaign-2=contacts-2.csv --out table.csv
"""

import argparse
import itertools
import sys

import numpy as np
import pandas as pd
from scipy import stats
from statsmodels.stats.multitest import multipletests
from statsmodels.stats.proportion import confint_proportions_2indep, proportion_confint, proportions_ztest

# The service's default report bands (lower edges in years); ages outside 18-120 are unknown.
AGE_EDGES = [18, 25, 35, 45, 55, 65]
MAX_AGE = 120
ALPHA = 0.05
DIMENSIONS = ["age_band", "region", "channel"]


def age_band_labels(edges):
    labels = [f"{low}-{high - 1}" for low, high in zip(edges, edges[1:])]
    return labels + [f"{edges[-1]}+"]


def read_contacts(customers_file, contact_files):
    customers = pd.read_csv(customers_file, dtype={"customer_id": str, "birth_date": str, "region": str, "channel": str})
    campaigns = []
    for campaign_id, file in contact_files:
        contacts = pd.read_csv(file, dtype={"customer_id": str, "contacted_at": str})
        contacts["campaign_id"] = campaign_id
        campaigns.append(contacts)
    contacts = pd.concat(campaigns, ignore_index=True).merge(customers, on="customer_id", how="inner")
    # Whole years at the contact date: the year difference, one less before the birthday.
    birth = contacts["birth_date"].fillna("")
    has_birth = birth.str.len() == 10
    birth_year = pd.to_numeric(birth.str.slice(0, 4), errors="coerce")
    contact_year = pd.to_numeric(contacts["contacted_at"].str.slice(0, 4))
    before_birthday = contacts["contacted_at"].str.slice(5, 10) < birth.str.slice(5, 10)
    age = (contact_year - birth_year - before_birthday.astype(int)).where(has_birth)
    bands = pd.cut(age, bins=AGE_EDGES + [MAX_AGE + 1], right=False, labels=age_band_labels(AGE_EDGES))
    contacts["age_band"] = bands.astype(object).where(bands.notna(), "unknown")
    contacts["revenue"] = contacts["revenue"].astype(float)
    contacts["converted"] = contacts["converted"].astype(int)
    return contacts


def segments(contacts):
    """(dimensions, labels, mask) for every one-way segment and every two-way cross."""
    for dimension in DIMENSIONS:
        column = contacts[dimension].to_numpy()
        for label in sorted(contacts[dimension].unique()):
            yield (dimension,), (label,), column == label
    for first, second in itertools.combinations(DIMENSIONS, 2):
        a = contacts[first].to_numpy()
        b = contacts[second].to_numpy()
        pairs = contacts[[first, second]].drop_duplicates().sort_values([first, second])
        for label_a, label_b in pairs.itertuples(index=False):
            yield (first, second), (label_a, label_b), (a == label_a) & (b == label_b)


def compare(contacts, dims, labels, mask):
    converted = contacts["converted"].to_numpy()
    revenue = contacts["revenue"].to_numpy()
    n, n_rest = int(mask.sum()), int((~mask).sum())
    x, x_rest = int(converted[mask].sum()), int(converted[~mask].sum())
    row = {
        "dimensions": " x ".join(dims),
        "labels": " x ".join(labels),
        "n": n,
        "conversions": x,
        "rest_n": n_rest,
        "rest_conversions": x_rest,
    }
    if n == 0 or n_rest == 0:
        return row
    row["rate"] = x / n
    row["rest_rate"] = x_rest / n_rest
    row["rate_low"], row["rate_high"] = proportion_confint(x, n, alpha=ALPHA, method="wilson")
    row["rest_rate_low"], row["rest_rate_high"] = proportion_confint(x_rest, n_rest, alpha=ALPHA, method="wilson")
    row["rate_difference"] = row["rate"] - row["rest_rate"]
    row["difference_low"], row["difference_high"] = confint_proportions_2indep(x, n, x_rest, n_rest, method="newcomb", compare="diff", alpha=ALPHA)
    if 0 < x + x_rest < n + n_rest:
        row["rate_z"], row["rate_p"] = proportions_ztest([x, x_rest], [n, n_rest])
    segment_revenue, rest_revenue = revenue[mask], revenue[~mask]
    row["value_mean"] = segment_revenue.mean()
    row["rest_value_mean"] = rest_revenue.mean()
    if n >= 2 and n_rest >= 2:
        welch = stats.ttest_ind(segment_revenue, rest_revenue, equal_var=False)
        row["value_t"], row["value_p"] = float(welch.statistic), float(welch.pvalue)
    return row


def adjust(table, column):
    tested = table[column].notna()
    table[f"{column}_adjusted"] = np.nan
    if tested.any():
        table.loc[tested, f"{column}_adjusted"] = multipletests(table.loc[tested, column], alpha=ALPHA, method="fdr_bh")[1]


def main(argv):
    parser = argparse.ArgumentParser(description=__doc__.split("\n")[0])
    parser.add_argument("--customers", required=True)
    parser.add_argument("--contacts", action="append", required=True, help="campaign_id=file.csv, once per campaign")
    parser.add_argument("--out", required=True)
    options = parser.parse_args(argv)
    contact_files = [tuple(item.split("=", 1)) for item in options.contacts]
    contacts = read_contacts(options.customers, contact_files)
    table = pd.DataFrame([compare(contacts, *segment) for segment in segments(contacts)])
    adjust(table, "rate_p")
    adjust(table, "value_p")
    table.to_csv(options.out, index=False)
    print(f"{len(table)} segments over {len(contacts)} contacts written to {options.out}")


if __name__ == "__main__":
    main(sys.argv[1:])
