"""Generate the invented Lumen Bay 60 data set (every name and number here is made up).

A seeded factor model: one market factor, one factor per sector, and idiosyncratic noise with
fat-ish tails (Student t), on business days from 2019-01-01 to 2026-11-30. The LB60 index is a
cap-weighted index of all 60 companies (weights drift with prices) with a little
index-methodology noise; the fund may trade only 48 of them, so tracking cannot be perfect.

Writes, in ``data/`` beside this file:
    index.csv          date, lb60              index level
    constituents.csv   date, <48 names>        prices (one company lists in June 2019)
    deposit_rate.csv   date, rate              annual deposit rate, percent
    sectors.csv        name, sector            all 60 companies

Run ``python generate.py``; running it again gives the same bytes.
"""

from __future__ import annotations

import os
import tempfile
from pathlib import Path

import numpy as np
import pandas as pd

SEED = 20261130
FIRST_DAY, LAST_DAY = "2019-01-01", "2026-11-30"
OUT = Path(__file__).resolve().parent / "data"

#: sector -> ten companies; a leading "~" marks a company the fund may not trade.
SECTORS: dict[str, tuple[str, ...]] = {
    "harbour_logistics": (
        "kestrel_quays",
        "ossery_freight",
        "~corlew_docks",
        "brannock_cranes",
        "vellin_warehousing",
        "tern_stevedores",
        "pellow_containers",
        "quillan_towage",
        "~dunmarra_cargo",
        "skellan_pilotage",
    ),
    "tidal_energy": (
        "~ravel_tidal",
        "averin_currents",
        "lisk_turbines",
        "carrow_grid",
        "murrin_lagoon_power",
        "halvey_wave",
        "brinefield_power",
        "tormay_cables",
        "~sallow_point_generation",
        "fulmar_tidal_works",
    ),
    "kelp_and_fisheries": (
        "wrackline_kelp",
        "dunlin_oysters",
        "~gannet_bay_fisheries",
        "petrel_smokehouse",
        "skua_seaweed_foods",
        "brinholt_canning",
        "plover_mussels",
        "cawdry_fish_market",
        "sanderling_hatcheries",
        "~knotweir_salt_cod",
    ),
    "island_finance": (
        "lanternhill_bank",
        "~brannock_assurance",
        "pellow_mutual",
        "tormay_credit",
        "dunmarra_trust",
        "skellan_savings",
        "lumenbay_mutual",
        "halvey_leasing",
        "~murrin_pension_trust",
        "lisk_exchange_house",
    ),
    "salt_and_minerals": (
        "kestrel_minerals",
        "greyshingle_sands",
        "ravel_quarries",
        "~saltpan_chemicals",
        "whimbrel_salt_works",
        "cawdry_granite",
        "sallow_kaolin",
        "ossery_ironsands",
        "quillan_lime",
        "~dunlin_aggregates",
    ),
    "ferries_and_visitors": (
        "razorbill_ferries",
        "~lanternhill_hotels",
        "skellan_island_tours",
        "guillemot_ferry_lines",
        "averin_harbour_inns",
        "tormay_marinas",
        "corlew_charters",
        "pellow_lighthouse_stays",
        "~vellin_ferry_yards",
        "fulmar_air_link",
    ),
}

#: The one company that lists after the start; no prices before this day.
LATE_LISTING = ("sanderling_hatcheries", "2019-06-17")

#: Deposit rate (annual %) the central bank of the island steers toward, by date.
RATE_PATH = (
    ("2019-01-01", 1.25),
    ("2020-03-02", 0.50),
    ("2021-09-01", 0.50),
    ("2023-06-01", 3.75),
    ("2024-09-02", 3.50),
    ("2026-11-30", 2.25),
)
MEETING_EVERY = 30  # business days between rate decisions; each moves at most 0.25


def simulate(rng: np.random.Generator, days: pd.DatetimeIndex):
    """Prices of all 60 companies, listing mask and index level, in SECTORS order."""
    names = [n.lstrip("~") for group in SECTORS.values() for n in group]
    n_days, n_names, n_sectors = len(days), len(names), len(SECTORS)
    sector_of = np.repeat(np.arange(n_sectors), 10)

    def shocks(df, size):  # Student t scaled to unit variance
        return rng.standard_t(df, size=size) * np.sqrt((df - 2) / df)

    # storm seasons: calm 1.0, a sharp episode in spring 2020, a milder one in 2022
    t = np.arange(n_days)
    storm = np.ones(n_days)
    for start, peak, decay in (("2020-02-24", 2.6, 40.0), ("2022-05-02", 1.6, 60.0)):
        k = days.searchsorted(pd.Timestamp(start))
        storm[k:] += (peak - 1.0) * np.exp(-(t[k:] - k) / decay)

    market = 0.0003 + 0.0085 * storm * shocks(5, n_days)
    sectors = 0.0055 * storm[:, None] * shocks(6, (n_days, n_sectors))
    beta = rng.uniform(0.7, 1.3, n_names)
    loading = rng.uniform(0.5, 1.2, n_names)
    idio_vol = rng.uniform(0.007, 0.02, n_names)
    idio = idio_vol * shocks(4, (n_days, n_names))
    returns = beta * market[:, None] + loading * sectors[:, sector_of] + idio
    returns = np.clip(returns, -0.4, 0.4)
    returns[0] = 0.0  # the first day only sets the starting prices

    start_price = rng.uniform(6.0, 140.0, n_names)
    prices = start_price * np.cumprod(1.0 + returns, axis=0)
    shares = rng.lognormal(mean=0.0, sigma=0.9, size=n_names) * 1e6 / start_price

    listed = np.ones((n_days, n_names), dtype=bool)
    late = names.index(LATE_LISTING[0])
    listed[: days.searchsorted(pd.Timestamp(LATE_LISTING[1])), late] = False

    # cap weights at the previous close, over the companies listed then
    caps = np.where(listed, prices * shares, 0.0)
    weights = caps[:-1] / caps[:-1].sum(axis=1, keepdims=True)
    index_returns = (weights * returns[1:]).sum(axis=1) + rng.normal(0.0, 4e-5, n_days - 1)
    level = 1000.0 * np.concatenate([[1.0], np.cumprod(1.0 + index_returns)])
    return names, prices, listed, level


def deposit_rate(days: pd.DatetimeIndex) -> np.ndarray:
    """Annual percent, moving by at most 0.25 at each meeting toward RATE_PATH."""

    def day_numbers(values) -> np.ndarray:
        return np.asarray(values, dtype="datetime64[D]").astype(np.int64)

    target = np.interp(
        day_numbers(days.to_numpy()),
        day_numbers([d for d, _ in RATE_PATH]),
        [r for _, r in RATE_PATH],
    )
    rate = np.empty(len(days))
    current = RATE_PATH[0][1]
    for i in range(len(days)):
        if i % MEETING_EVERY == 0 and i > 0:
            step = np.clip(target[i] - current, -0.25, 0.25)
            current += 0.25 * np.round(step / 0.25)
        rate[i] = current
    return rate


def write_atomic(path: Path, text: str) -> None:
    path.parent.mkdir(parents=True, exist_ok=True)
    fd, tmp = tempfile.mkstemp(dir=path.parent, prefix=f".{path.name}.", suffix=".tmp")
    try:
        with os.fdopen(fd, "w", encoding="utf-8", newline="\n") as handle:
            handle.write(text)
            handle.flush()
            os.fsync(handle.fileno())
        os.chmod(tmp, 0o644)  # mkstemp makes 0600; these are ordinary data files
        os.replace(tmp, path)
    except BaseException:
        Path(tmp).unlink(missing_ok=True)
        raise


def table(header: list[str], dates: list[str], columns: list[list[str]]) -> str:
    rows = [",".join(header)]
    rows += [",".join([day, *cells]) for day, cells in zip(dates, zip(*columns))]
    return "\n".join(rows) + "\n"


def main() -> None:
    rng = np.random.default_rng(SEED)
    days = pd.bdate_range(FIRST_DAY, LAST_DAY)
    dates = list(days.strftime("%Y-%m-%d"))
    names, prices, listed, level = simulate(rng, days)
    tradeable = [n for group in SECTORS.values() for n in group if not n.startswith("~")]

    def price_cells(j: int) -> list[str]:
        return [f"{p:.6f}" if ok else "" for p, ok in zip(prices[:, j], listed[:, j])]

    write_atomic(OUT / "index.csv", table(["date", "lb60"], dates, [[f"{v:.6f}" for v in level]]))
    write_atomic(
        OUT / "constituents.csv",
        table(["date", *tradeable], dates, [price_cells(names.index(n)) for n in tradeable]),
    )
    write_atomic(
        OUT / "deposit_rate.csv",
        table(["date", "rate"], dates, [[f"{r:.2f}" for r in deposit_rate(days)]]),
    )
    sector_rows = [f"{n.lstrip('~')},{s}" for s, group in SECTORS.items() for n in group]
    write_atomic(OUT / "sectors.csv", "name,sector\n" + "\n".join(sector_rows) + "\n")


if __name__ == "__main__":
    main()
