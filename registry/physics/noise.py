"""Noise figure of a receive chain: an active antenna's amplifier followed by its passive feeder.

* Friis's cascade formula (H. T. Friis, "Noise figures of radio receivers", Proc. IRE 32, 1944):
  F = F1 + (F2 - 1)/G1 + (F3 - 1)/(G1 G2) + ..., noise factors F and available gains G as ratios, not dB.
* A passive loss L (ratio, >= 1) at the standard temperature T0 = 290 K has noise factor F = L and gain 1/L
  (its effective noise temperature is (L - 1) T0; common textbook result, e.g. Pozar, Microwave Engineering,
  4th ed., ch. 10, from memory).
"""
from __future__ import annotations

import math


def db_to_ratio(value_db: float) -> float:
    """10^(dB/10)."""
    return 10.0 ** (value_db / 10.0)


def ratio_to_db(ratio: float) -> float:
    """10·log10(ratio)."""
    return 10.0 * math.log10(ratio)


def cascade_noise_figure_db(stages_db: list[tuple[float, float]]) -> float:
    """Noise figure (dB) of stages in order, each (noise_figure_db, gain_db), by Friis's cascade formula."""
    if not stages_db:
        raise ValueError("a cascade needs at least one stage")
    total, gain_before = 0.0, 1.0
    for n, (noise_figure_db, gain_db) in enumerate(stages_db):
        factor = db_to_ratio(noise_figure_db)
        total += factor if n == 0 else (factor - 1.0) / gain_before
        gain_before *= db_to_ratio(gain_db)
    return ratio_to_db(total)


def amplifier_and_feeder_noise_figure_db(amp_noise_figure_db: float, amp_gain_db: float,
                                         feeder_loss_db: float) -> float:
    """Noise figure (dB) of an antenna amplifier followed by a passive feeder of `feeder_loss_db` at 290 K:
    F = F_amp + (L - 1)/G_amp (the feeder's noise factor is its loss L)."""
    if feeder_loss_db < 0:
        raise ValueError("a passive feeder's loss is not negative")
    return cascade_noise_figure_db([(amp_noise_figure_db, amp_gain_db), (feeder_loss_db, -feeder_loss_db)])
