"""The policy's co-site figures by service (`cosite_services`): merged over the shipped and fleet policy,
built into the model, and checked against the service table.

Each figure is written `{value: ..., source: "..."}` under its service id; the fleet's policy replaces the
shipped one's figure by figure. A figure set here comes before the service table's and after an
installation's own `radio` figures (compute/cosite.py).
"""
from __future__ import annotations

from typing import Any

from registry.core.base import FrozenMap
from registry.core.errors import Problem
from registry.core.model import Policy, Service

TRANSMIT_KEYS = ("tx_bands_mhz", "tx_channel_steps_khz", "tx_peak_power_dbm", "spurious_dbc",
                 "im3_conversion_loss_db", "im5_conversion_loss_db", "max_harmonic_order")
"""Figures that only a transmitting service has."""
BAND_KEYS = ("tx_bands_mhz", "rx_bands_mhz")
KEY = "cosite_services"


def merge(lower: dict[str, Any], upper: dict[str, Any]) -> dict[str, dict[str, Any]]:
    """`upper`'s figures laid over `lower`'s, service by service and figure by figure."""
    out = {service: dict(figures) for service, figures in lower.items()}
    for service, figures in upper.items():
        out.setdefault(service, {}).update(figures)
    return out


def value_of(key: str, value: Any) -> Any:
    """A validated figure as the model holds it: bands and steps as tuples, numbers as floats."""
    if key in BAND_KEYS:
        return tuple((float(lo), float(hi)) for lo, hi in value)
    if key == "tx_channel_steps_khz":
        return tuple(float(step) for step in value)
    if key == "max_harmonic_order":
        return int(value)
    if isinstance(value, str):
        return value
    return float(value)


def build(merged: dict[str, dict[str, Any]]) -> FrozenMap:
    """Service id → FrozenMap(figure key → (value, source))."""
    return FrozenMap((service, FrozenMap((key, (value_of(key, item["value"]), item["source"]))
                                         for key, item in figures.items()))
                     for service, figures in merged.items())


def check(policy: Policy, services: list[Service] | None) -> list[Problem]:
    """A service id the table does not hold, a transmit figure on a service that does not transmit, and a
    band given high edge first: each located on the policy line that sets it."""
    if services is None:
        return []
    table = {service.id: service for service in services}
    problems = []
    for service_id, figures in policy.cosite_services.items():
        at = f"{KEY}.{service_id}"
        service = table.get(service_id)
        if service is None:
            problems.append(_problem(policy, at, f"'{service_id}'", "a service id from the shipped table or "
                                     f"services.yaml ({', '.join(sorted(table))})"))
            continue
        for key, (value, _) in figures.items():
            if key in TRANSMIT_KEYS and not service.transmits:
                problems.append(_problem(policy, f"{at}.{key}", f"{key} for {service_id}, which does not transmit",
                                         "transmit figures only for a service with transmits: true"))
            if key in BAND_KEYS:
                problems += [_problem(policy, f"{at}.{key}.value[{n}]", f"[{lo:g}, {hi:g}]",
                                      "the lower band edge first (low < high)")
                             for n, (lo, hi) in enumerate(value) if not lo < hi]
    return problems


def _problem(policy: Policy, field: str, found: str, expected: str) -> Problem:
    return Problem.at(policy.where(field), field, found, expected)
