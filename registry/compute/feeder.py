"""Figures of the feeder and of measurements: cable attenuation fit, loss budget, measured VSWR,
measured sweeps. Pure functions of the model objects; physics from registry.physics."""
from __future__ import annotations

from collections.abc import Mapping

import functools
import math
from datetime import date

import numpy as np

from registry.core import figure_keys as FK
from registry.core.model import AntennaModel, Cable, Installation, Policy, Service
from registry.physics import feeder, mismatch, noise, sweep
from registry.core.results import CableResult, Curve, Figure
from registry.core.sources import where

MHZ = 1e6


# --- feeder ---------------------------------------------------------------------------------------------


@functools.lru_cache(maxsize=None)
def attenuation_fit(table: tuple[tuple[float, float], ...]) -> feeder.AttenuationFit:
    """The a·√f + b·f fit of a cable table ((freq_mhz, dB per 100 m) pairs), once per distinct table."""
    freqs_hz = np.array([freq for freq, _ in table]) * MHZ
    return feeder.fit_attenuation(freqs_hz, np.array([loss for _, loss in table]))


def cable_result(cable: Cable) -> CableResult:
    """A cable's table, its fit over the table's range and the fit's residual."""
    fit = attenuation_fit(cable.attenuation_db_per_100m)
    table_mhz = np.array([freq for freq, _ in cable.attenuation_db_per_100m])
    fit_mhz = np.geomspace(table_mhz.min(), max(table_mhz.max(), cable.max_freq_mhz), 60)
    src = where(cable, "attenuation_db_per_100m" if cable.declared_unit == "db_per_100m"
                else "attenuation_db_per_100ft")
    figures = tuple(finite([
        Figure(FK.CABLE_A, "Conductor term a", fit.a_db_per_100m_sqrt_hz * math.sqrt(MHZ), "dB/100 m/√MHz",
               "α(f) = a·√f + b·f", source=FEEDER_SOURCE, src=src),
        Figure(FK.CABLE_B, "Dielectric term b", fit.b_db_per_100m_hz * MHZ, "dB/100 m/MHz",
               "α(f) = a·√f + b·f", source=FEEDER_SOURCE, src=src),
        Figure(FK.CABLE_RMS_RESIDUAL, "Fit residual, RMS", fit.rms_residual_db_per_100m, "dB/100 m", src=src),
        Figure(FK.CABLE_MAX_RESIDUAL, "Fit residual, largest", fit.max_residual_db_per_100m, "dB/100 m", src=src),
    ]))
    return CableResult(
        cable=cable.id,
        table=Curve(table_mhz, np.array([loss for _, loss in cable.attenuation_db_per_100m]),
                    "Frequency (MHz)", "Attenuation (dB/100 m)"),
        fitted=Curve(fit_mhz, feeder.attenuation_db_per_100m(fit, fit_mhz * MHZ),
                     "Frequency (MHz)", "Attenuation (dB/100 m)"),
        figures=figures,
    )


FEEDER_SOURCE = "Pozar, Microwave Engineering, 4th ed., §2.7 (conductor √f and dielectric f terms), §2.3 (mismatch)"


def vswr_for_mismatch(figures: list[Figure], model: AntennaModel) -> tuple[float, str]:
    """The antenna VSWR the mismatch loss is taken from: measured, else modelled, else rated."""
    by_key = {figure.key: figure for figure in figures}
    for key, label in ((FK.SWEEP_MAX_VSWR, "measured sweep, worst in band"), (FK.MEASURED_VSWR, "measured"),
                       (FK.VSWR_MAX_IN_BAND, "modelled, worst in band")):
        if key in by_key and isinstance(by_key[key].value, float) and math.isfinite(by_key[key].value):
            return by_key[key].value, label
    return model.rated_vswr, "rated (no measurement or model)"


def feeder_figures(installation: Installation, model: AntennaModel, service: Service, cable: Cable,
                   policy: Policy, figures_so_far: list[Figure]) -> list[Figure]:
    """Feeder loss at the highest frequency of the service: cable, connectors, adapters, splitter, mismatch;
    with an active antenna, the receive chain's gain and noise figure (`receive_figures`)."""
    with np.errstate(all="ignore"):  # a value that is not finite is said so on its figure (`finite`)
        figures = _feeder_figures(installation, model, service, cable, policy, figures_so_far)
        total = next(figure.value for figure in figures if figure.key == FK.FEEDER_TOTAL_LOSS_DB)
        return finite(figures + receive_figures(installation, total))


def _feeder_figures(installation: Installation, model: AntennaModel, service: Service, cable: Cable,
                    policy: Policy, figures_so_far: list[Figure]) -> list[Figure]:
    run = installation.feeder
    freq_mhz = max(high for _, high in service.bands_mhz)
    fit = attenuation_fit(cable.attenuation_db_per_100m)
    alpha = feeder.attenuation_db_per_100m(fit, freq_mhz * MHZ)
    cable_db = float(feeder.cable_loss_db(fit, freq_mhz * MHZ, run.length_m))
    connector_db = run.connectors * policy.connector_loss_db
    adapter_db = run.adapters * policy.adapter_loss_db
    splitter = installation.splitter
    splitter_db = splitter.loss_db if splitter is not None else 0.0
    vswr, vswr_from = vswr_for_mismatch(figures_so_far, model)
    budget = feeder.feeder_budget(cable_db, (connector_db, adapter_db, splitter_db), vswr)
    src_len = where(installation, "feeder.length_m")
    table_top = max(freq for freq, _ in cable.attenuation_db_per_100m)
    return [
        Figure(FK.FEEDER_FREQ_MHZ, "Evaluated at (highest service frequency)", freq_mhz, "MHz",
               src=where(service, "bands_mhz")),
        Figure("feeder.attenuation_db_per_100m", "Cable attenuation", alpha, "dB/100 m", "α(f) = a·√f + b·f",
               (("cable", cable.id), ("table up to", f"{table_top:g} MHz")), FEEDER_SOURCE,
               where(cable, "id")),
        Figure(FK.FEEDER_CABLE_LOSS_DB, "Cable loss", cable_db, "dB", "α(f) · ℓ / 100",
               (("α", f"{alpha:.2f} dB/100 m"), ("ℓ", f"{run.length_m:g} m")), FEEDER_SOURCE, src_len),
        Figure(FK.FEEDER_CONNECTOR_LOSS_DB, "Connector loss", connector_db, "dB", "n · L_c",
               (("n", str(run.connectors)), ("L_c", f"{policy.connector_loss_db:g} dB")), "fleet policy",
               where(installation, "feeder.connectors")),
        Figure(FK.FEEDER_ADAPTER_LOSS_DB, "Adapter loss", adapter_db, "dB", "n · L_a",
               (("n", str(run.adapters)), ("L_a", f"{policy.adapter_loss_db:g} dB")), "fleet policy",
               where(installation, "feeder.adapters")),
        *splitter_figures(installation),
        Figure(FK.FEEDER_MISMATCH_LOSS_DB, "Mismatch loss", budget.mismatch_loss_db, "dB",
               "ML = −10·log₁₀(1 − |Γ|²), |Γ| = (VSWR − 1)/(VSWR + 1)",
               (("VSWR", f"{vswr:.2f} ({vswr_from})"),), "Pozar, Microwave Engineering, 4th ed., §2.3"),
        Figure(FK.FEEDER_RETURN_LOSS_DB, "Return loss at the antenna", budget.return_loss_db, "dB",
               "RL = −20·log₁₀|Γ|", source="Pozar, Microwave Engineering, 4th ed., §2.3"),
        Figure(FK.FEEDER_TOTAL_LOSS_DB, "Total feeder loss", budget.total_loss_db, "dB",
               "cable + connectors + adapters + " + ("splitter + " if splitter else "") + "mismatch",
               (("budget", f"{policy.feeder_loss_budget_for(service.id):g} dB"),), FEEDER_SOURCE, src_len),
        Figure(FK.FEEDER_DELIVERED_PCT, "Power reaching the antenna", 100.0 * budget.delivered_fraction, "%",
               "10^(−total/10) · 100", source=FEEDER_SOURCE, src=src_len),
    ]


SPLIT_FORMULA = "L_s: the insertion loss from the antenna to this service's port, added to the feeder's"


def splitter_figures(installation: Installation) -> list[Figure]:
    """The loss of the splitter or diplexer between the antenna and this service's feeder (none without one)."""
    splitter = installation.splitter
    if splitter is None:
        return []
    owner = installation.shared_from or installation.position
    return [Figure(FK.FEEDER_SPLITTER_LOSS_DB, f"{splitter.kind.capitalize()} loss", splitter.loss_db, "dB",
                   SPLIT_FORMULA, (("part", splitter.part_number), ("antenna of", owner),
                                   ("feeds", ", ".join((owner, *splitter.feeds)))),
                   splitter.source, where(splitter, "loss_db"))]


NOISE_SOURCE = ("Friis, Noise figures of radio receivers, Proc. IRE 32 (1944): F = F1 + (F2 − 1)/G1; "
                "a passive loss L at 290 K has F = L (Pozar, Microwave Engineering, 4th ed., ch. 10, from memory)")


def receive_figures(installation: Installation, feeder_loss_db: float | str | None) -> list[Figure]:
    """An active antenna's receive chain: its amplifier, the gain left at the receiver after the feeder, and
    the noise figure of amplifier and feeder by Friis's cascade formula (`physics.noise`)."""
    amp = installation.amplifier
    if amp is None:
        return []
    src_gain, src_nf = where(amp, "gain_db"), where(amp, "noise_figure_db")
    figures = [Figure(FK.RECEIVE_AMPLIFIER_GAIN_DB, "Antenna amplifier gain", amp.gain_db, "dB", source=amp.source,
                      src=src_gain),
               Figure(FK.RECEIVE_AMPLIFIER_NOISE_FIGURE_DB, "Antenna amplifier noise figure", amp.noise_figure_db, "dB",
                      source=amp.source, src=src_nf)]
    if not isinstance(feeder_loss_db, float) or not math.isfinite(feeder_loss_db):
        return figures
    inputs = (("G", f"{amp.gain_db:g} dB"), ("NF", f"{amp.noise_figure_db:g} dB"), ("L", f"{feeder_loss_db:.2f} dB"))
    return figures + [
        Figure(FK.RECEIVE_NET_GAIN_DB, "Gain left at the receiver's input", amp.gain_db - feeder_loss_db, "dB",
               "G − L (L: the total feeder loss)", inputs,
               "arithmetic: the amplifier's gain less the total feeder loss (figures above)", src_gain),
        Figure(FK.RECEIVE_NOISE_FIGURE_DB, "Noise figure of amplifier and feeder",
               noise.amplifier_and_feeder_noise_figure_db(amp.noise_figure_db, amp.gain_db, feeder_loss_db), "dB",
               "NF = 10·log₁₀(F_a + (L − 1)/G_a), ratios", inputs, NOISE_SOURCE, src_nf),
    ]


_NOT_FINITE = {
    FK.FEEDER_RETURN_LOSS_DB: "a perfect match (VSWR 1.0) reflects nothing, so the return loss has no finite value",
    FK.SWEEP_MAX_VSWR: "the sweep reflects everything (|S11| of 1 or more) in the band: no finite VSWR",
}


def finite(figures: list[Figure]) -> list[Figure]:
    """The figures with every number that is not finite (inf, NaN) replaced by words saying why: no such
    number reaches a page, the record or the terminal."""
    return [figure._replace(value="not available: " + _NOT_FINITE.get(
        figure.key, "the inputs give no finite value (check the numbers this figure is made from)"))
            if isinstance(figure.value, float) and not math.isfinite(figure.value) else figure
            for figure in figures]


# --- measurements ---------------------------------------------------------------------------------------


def measured_figures(installation: Installation, service: Service, cable: Cable, policy: Policy,
                     as_of: date, sweeps: Mapping[str, str]) -> tuple[list[Figure], Curve | None]:
    """Measured VSWR, its age, and what a measured sweep shows across the service band (`sweeps`: each
    sweep file's text by path, as the load stage read it)."""
    with np.errstate(all="ignore"):  # a value that is not finite is said so on its figure (`finite`)
        figures, curve = _measured_figures(installation, service, cable, as_of, sweeps)
    return finite(figures), curve


def _measured_figures(installation: Installation, service: Service, cable: Cable, as_of: date,
                      sweeps: Mapping[str, str]) -> tuple[list[Figure], Curve | None]:
    measured = installation.measured
    if measured is None:
        return [], None
    figures = [
        Figure(FK.MEASURED_DATE, "Last measured", measured.date.isoformat(), "", src=where(measured, "date")),
        Figure(FK.MEASURED_AGE_DAYS, "Age of the measurement", float((as_of - measured.date).days), "days",
               "as-of date − measurement date", (("as of", as_of.isoformat()),), src=where(measured, "date")),
    ]
    if measured.vswr is not None:
        figures.append(Figure(FK.MEASURED_VSWR, "Measured VSWR", float(measured.vswr), "",
                              src=where(measured, "vswr")))
    if measured.sweep is None:
        return figures, None
    src = where(measured, "sweep")
    try:
        text = sweeps.get(str(measured.sweep))
        if text is None:
            raise OSError(f"cannot read {measured.sweep}")
        data = sweep.parse_s1p(text, source=str(measured.sweep))
        worst = max((sweep.band_summary(data, low * MHZ, high * MHZ) for low, high in service.bands_mhz
                     if np.any((data.freqs_hz >= low * MHZ) & (data.freqs_hz <= high * MHZ))),
                    key=lambda summary: summary.max_vswr, default=None)
    except (OSError, ValueError, ArithmeticError) as error:
        figures.append(Figure(FK.SWEEP_ERROR, "Measured sweep could not be used", str(error), "", src=src))
        return figures, None
    if worst is None:
        figures.append(Figure(FK.SWEEP_ERROR, "Measured sweep could not be used",
                              "the sweep has no point inside the service band", "", src=src))
        return figures, None
    figures += [
        Figure(FK.SWEEP_MAX_VSWR, "Measured sweep VSWR, worst in band", worst.max_vswr, "",
               "VSWR = (1 + |S11|) / (1 − |S11|)", (("points in band", str(worst.n_points)),
                                                    ("at", f"{worst.freq_at_max_vswr_hz / MHZ:.3f} MHz")),
               "Pozar, Microwave Engineering, 4th ed., §2.3; Touchstone (IBIS Open Forum)", src),
        Figure(FK.SWEEP_MIN_RETURN_LOSS_DB, "Measured return loss, worst in band", worst.min_return_loss_db,
               "dB", "RL = −20·log₁₀|S11|", source="Pozar, Microwave Engineering, 4th ed., §2.3", src=src),
    ]
    try:
        fault = sweep.distance_to_reflection(data, cable.velocity_factor)
        figures.append(Figure(
            FK.SWEEP_FAULT_DISTANCE_M, "Largest reflection along the feeder at", fault.peak_distance_m, "m",
            "d = v·t / 2, v = VF·c, t from the inverse FFT of S11 (Hann window)",
            (("VF", f"{cable.velocity_factor:g}"), ("resolution", f"{fault.resolution_m:.2f} m"),
             ("feeder length", f"{installation.feeder.length_m:g} m")),
            "band-pass time-domain reflectometry (inverse DFT of S11)", src))
    except ValueError as error:
        figures.append(Figure(FK.SWEEP_FAULT_DISTANCE_M, "Largest reflection along the feeder at",
                              f"not available: {error}", "", src=src))
    vswr_curve = mismatch.vswr_from_gamma(np.abs(data.s11))
    shown = np.isfinite(vswr_curve)  # a point of total reflection has no VSWR to draw
    return figures, Curve(data.freqs_hz[shown] / MHZ, vswr_curve[shown], "Frequency (MHz)", "VSWR")


