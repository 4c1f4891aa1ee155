"""The summary of a batch: counts per verdict, parts that need action, the worst margins.

Also picks which rows get their uncertainty budget drawn: the borderline rows and the rows
with the smallest margin, capped so a large batch does not fill the report with budgets.
"""

from __future__ import annotations

from dataclasses import dataclass

import numpy as np
import pandas as pd

from qc.report.actions import INSTRUMENT_ACTIONS
from qc.report.data import VERDICTS

__all__ = [
    "MAX_BUDGETS",
    "PartNeed",
    "budget_positions",
    "budget_rows",
    "parts_needing_action",
    "verdict_counts",
    "worst_margins",
]

MAX_BUDGETS = 6
WORST_SHOWN = 10


def verdict_counts(results: pd.DataFrame) -> list[tuple[str, int]]:
    """How many measurements got each verdict, every verdict listed (zero included)."""
    counts = results["verdict"].value_counts()
    return [(v, int(counts.get(v, 0))) for v in VERDICTS]


@dataclass(frozen=True)
class PartNeed:
    """One part that needs action, and why in a few words."""

    part: str
    nonconforming: int
    borderline: int
    actions: tuple[str, ...]
    flags: tuple[str, ...] = ()

    @property
    def reason(self) -> str:
        """The reasons as one line: verdict counts first, then the distinct actions."""
        bits = []
        if self.nonconforming:
            bits.append(f"{self.nonconforming} nonconforming")
        if self.borderline:
            bits.append(f"{self.borderline} borderline")
        bits.extend(self.actions)
        if self.flags:
            bits.append("flagged: " + ", ".join(self.flags))
        return "; ".join(bits)


def parts_needing_action(results: pd.DataFrame, actions: pd.DataFrame) -> list[PartNeed]:
    """Parts with a nonconforming or borderline row or an action on the part, most urgent
    first. Actions on an instrument (calibration, a finer instrument) are left to the
    action list: they concern every part it measured, not one part."""
    kind = actions["action"].astype(str).str.strip().str.lower()
    actions = actions[~kind.isin(INSTRUMENT_ACTIONS)]
    verdict = results["verdict"]
    part = results["part"].astype(str)
    nc = part[verdict == "nonconforming"].value_counts()
    bl = part[verdict == "borderline"].value_counts()
    acts = actions.assign(part=actions["part"].astype(str)).groupby("part", sort=False)["action"]
    act_map = {p: tuple(dict.fromkeys(a.astype(str))) for p, a in acts}
    names = list(dict.fromkeys([*nc.index, *bl.index, *act_map]))
    flagged = results.loc[verdict != "conforms", ["part", "flags"]].dropna()
    flag_map: dict[str, tuple[str, ...]] = {}
    for p, text in zip(flagged["part"].astype(str), flagged["flags"].astype(str), strict=True):
        words = [f.strip().replace("-", " ") for f in text.split(";") if f.strip()]
        flag_map[p] = tuple(dict.fromkeys([*flag_map.get(p, ()), *words]))
    needs = [PartNeed(p, int(nc.get(p, 0)), int(bl.get(p, 0)), act_map.get(p, ()),
                      flag_map.get(p, ())) for p in names]
    order = {p: i for i, p in enumerate(dict.fromkeys(part))}
    needs.sort(key=lambda n: (-n.nonconforming, -n.borderline, order.get(n.part, len(order))))
    return needs


def worst_margins(results: pd.DataFrame, n: int = WORST_SHOWN) -> pd.DataFrame:
    """The n rows with the smallest margin to a limit in units of U (NaN margins left out)."""
    margin = pd.to_numeric(results["margin_in_U"], errors="coerce")
    keep = results[margin.notna()].assign(_m=margin[margin.notna()])
    return keep.sort_values("_m", kind="stable").head(n).drop(columns="_m")


def budget_rows(results: pd.DataFrame, budgets: pd.DataFrame) -> tuple[list[int], int]:
    """Row indices (into results) whose budget the report draws, and how many qualified.

    Every borderline row qualifies, then the three rows with the smallest margin; only rows
    that have budget lines count. At most ``MAX_BUDGETS`` are drawn, smallest margin first.
    """
    positions = np.arange(len(results))
    with_budget = np.isin(positions, budget_positions(results, budgets))
    margin = pd.to_numeric(results["margin_in_U"], errors="coerce").to_numpy(float)
    border = positions[(results["verdict"].to_numpy() == "borderline") & with_budget]
    ranked = positions[with_budget & np.isfinite(margin)]
    ranked = ranked[np.argsort(margin[ranked], kind="stable")][:3]
    chosen = list(dict.fromkeys([*border.tolist(), *ranked.tolist()]))
    key = np.where(np.isfinite(margin), margin, np.inf)
    chosen.sort(key=lambda i: key[i])
    return chosen[:MAX_BUDGETS], len(chosen)


def budget_positions(results: pd.DataFrame, budgets: pd.DataFrame) -> np.ndarray:
    """Position in ``results`` of each budget line (``row_index`` is a label of results.index,
    which is the position when the index is the default 0 … n − 1); −1 where it matches none."""
    labels = pd.to_numeric(budgets["row_index"], errors="coerce")
    return results.index.get_indexer(labels)
