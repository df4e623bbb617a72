"""Everything one ``trackfit fit`` run produced, handed to the reporter as one value."""

from __future__ import annotations

from dataclasses import dataclass
from datetime import date

from trackfit.core.limits import NO_LIMITS, Limits
from trackfit.core.risk import ExAnteRisk
from trackfit.data.dataset import TrackingData
from trackfit.data.holdings import CurrentHoldings
from trackfit.evaluate.holdout import HoldoutStudy
from trackfit.evaluate.trades import TradeList
from trackfit.job import Job


@dataclass(frozen=True)
class FitOutcome:
    """One rebalance: the job, its data, the study, and which model's weights are held.

    Attributes
    ----------
    job : Job
    data : TrackingData
    as_of : date
        Last return date in the window.
    study : HoldoutStudy
    held : str
        Name of the model in ``study.models`` whose ``final_fit`` weights are the ones to hold.
    warnings : tuple of str
        Everything worth telling the user, from every layer, in order, without duplicates.
    limits : Limits
        The mandate limits in force (positions index ``data.names``).
    trades : TradeList or None
        From the current holdings to the held weights, when current holdings were given.
    notes : tuple of str
        Statements about method the report must carry (for example how a unique solution is
        picked when there are more constituents than rows).
    holdings : CurrentHoldings or None
        The current holdings the trades start from (drifted to ``as_of`` when dated), when
        current holdings were given.
    risk : ExAnteRisk or None
        Ex-ante tracking error of the held weights over the whole window, by name and (when
        the job names a groups file) by group; None when it was not computed.
    """

    job: Job
    data: TrackingData
    as_of: date
    study: HoldoutStudy
    held: str
    warnings: tuple[str, ...]
    limits: Limits = NO_LIMITS
    trades: TradeList | None = None
    notes: tuple[str, ...] = ()
    holdings: CurrentHoldings | None = None
    risk: ExAnteRisk | None = None
