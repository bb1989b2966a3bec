"""Where a limit comes from: every threshold of the register with its standing (the methods page's one table),
and the source of the limit each finding is held against (the installation and audit pages).

A threshold's source text begins with its standing: "sourced: <document, edition, section>", "common
practice, no source: <reason>", "unverified: <document to check it against>" or "operator's choice: <reason>"
(registry/data/*.yaml; tests/test_threshold_standing.py holds the shipped files to it).
"""
from __future__ import annotations

from pathlib import Path
from typing import Any

from registry.check.rules import IMPEDANCE_TOLERANCE_PCT
from registry.compute.element import HORIZON_LOSS_LIMIT_DB
from registry.core.model import POLICY_KEYS, Fleet, Policy, Service
from registry.load.fleet import SHIPPED_DIR
from registry.site.format import bands_text, fmt, vswr_text
from registry.site.labels import field_label

STANDINGS = ("sourced", "common practice", "unverified", "operator's choice")
"""The standings a threshold can have, in the words the source texts begin with."""

NOT_GIVEN = "not given"

POLICY_LIMIT = {
    "element-length": "length_tolerance_pct",
    "vswr-bandwidth": "vswr_limit",
    "measured-vswr": "vswr_limit",
    "ground-plane-effect": "vswr_limit",
    "feeder-loss": "feeder_loss_budget_db",
    "isolation": "min_isolation_db",
    "ground-plane": "ground_plane_min_radius_wavelengths",
    "measurement-age": "measurement_max_age_days",
    "cosite-small": "cosite_small_margin_db",
}
"""Rules whose limit is one policy setting (by service where the setting has a map)."""

FIXED_LIMIT = {
    "impedance-match": f"the antenna's nominal impedance from the antenna catalogue; a difference over "
                       f"{IMPEDANCE_TOLERANCE_PCT:g} % is a mismatch (common practice, no source: catalogue "
                       f"impedances are nominal to a few per cent)",
    "cable-frequency": "the cable's rated maximum frequency from the cable catalogue (its registry line)",
    "cosite": "a margin of 0 dB: the interfering level reaches the receiver's protection threshold (each "
              "threshold's standing is on the aircraft's interference page and in the methods table)",
    "ground-plane-effect dB": f"{HORIZON_LOSS_LIMIT_DB:g} dB of horizon gain lost on the plate against an infinite "
                              "ground (common practice, no source: rim diffraction alone takes about 6 dB off)",
    "skin-position": "the skin tolerance figure of the installation (method and source in its computed figures)",
    "missing-data": "no limit: a figure the checks need is missing",
    "unmodellable": "no limit: the model cannot take the geometry",
    "embodiment": "agreement: every installation an embodied modification adds is in the register as it names "
                  "it, and none it removes (common practice, no source: configuration bookkeeping, the register "
                  "must hold the aircraft as modified)",
    "embodiment-record": "agreement: the aircraft file lists a modification exactly when modifications.yaml has "
                         "it embodied there, on the same date (common practice, no source: configuration "
                         "bookkeeping, two records of one fact)",
}
"""Rules whose limit is not a policy setting."""


def standing_of(text: str) -> str:
    """The standing a source text begins with ("sourced", ...), or "not given"."""
    lowered = text.strip().lower()
    return next((word for word in STANDINGS if lowered.startswith(word)), NOT_GIVEN)


def has_standing(text: str) -> bool:
    """True when `text` is "<standing>: <something>" (for "common practice", ", no source: <reason>")."""
    standing = standing_of(text)
    if standing == NOT_GIVEN:
        return False
    rest = text.strip()[len(standing):]
    if standing == "common practice":
        rest = rest.removeprefix(", no source")
    return rest.startswith(": ") and len(rest[2:].strip()) > 3


def shipped(where_path: str) -> bool:
    """True when a registry position is in the package's shipped files (not the fleet's own)."""
    try:
        return Path(where_path).resolve().parent == SHIPPED_DIR.resolve()
    except (OSError, ValueError):
        return False


def policy_source(policy: Policy, key: str) -> str:
    return str(policy.sources.get(key, "")) or NOT_GIVEN


def limit_source(fleet: Fleet, rule: str, services: list[str], unit: str = "") -> str:
    """Where the limit of a finding of `rule` (on installations of `services`, in `unit`) comes from, in one
    line."""
    policy = fleet.policy
    if rule == "ground-plane-effect" and unit == "dB":
        return FIXED_LIMIT["ground-plane-effect dB"]
    key = POLICY_LIMIT.get(rule)
    if key:
        entry = key
        if key == "vswr_limit" and any(s in policy.vswr_limit_by_service for s in services):
            entry = f"vswr_limit_by_service.{next(s for s in services if s in policy.vswr_limit_by_service)}"
            key = "vswr_limit_by_service"
        elif key == "feeder_loss_budget_db":
            entry = f"{key}.{next((s for s in services if s in policy.feeder_loss_budget_db), 'default')}"
        where = policy.where(entry)
        owner = "shipped policy" if shipped(where.path) else "fleet policy"
        return f"{owner} {entry}: {policy_source(policy, key)}"
    service = fleet.services.get(services[0]) if services else None
    if rule in ("band-coverage", "antenna-suitability") and service is not None:
        return f"service table, {service.id}: {service.source or NOT_GIVEN}"
    if rule == "coverage" and service is not None and service.must_see:
        return (f"service table, {service.id}.must_see: {service.must_see.get('source', NOT_GIVEN)}; attitudes: "
                f"{policy_source(policy, 'coverage_bank_deg')}")
    return FIXED_LIMIT.get(rule, NOT_GIVEN)


def _value_text(value: Any, key: str = "") -> str:
    """A threshold's value by its quantity: VSWR as n.nn:1, bands as ranges in MHz, a unit read off the key's
    last word (`connector_loss_db` is in dB)."""
    if key.startswith("vswr_limit") and isinstance(value, (int, float)):
        return vswr_text(value)
    if key.endswith("bands_mhz") and isinstance(value, (tuple, list)):
        return bands_text(value)
    if isinstance(value, bool):
        return "yes" if value else "no"
    if isinstance(value, (int, float)):
        return fmt(value, field_label(key)[1] if key else "")
    if isinstance(value, (tuple, list)):
        return "; ".join(_value_text(v) for v in value)
    if hasattr(value, "items"):
        return ", ".join(f"{k}: {_value_text(v)}" for k, v in value.items())
    return str(value)


def _row(group: str, name: str, value: Any, source: str, where, src_text, override: str = "") -> dict[str, str]:
    key = (name.split(": ")[0] if group == "Policy" else name.split(": ")[-1]).split(".")[0]
    return {"group": group, "name": name, "value": _value_text(value, key), "standing": standing_of(source),
            "source": source or NOT_GIVEN, "override": override,
            "src": src_text(f"{where.path}:{where.line}") if where else ""}


def policy_threshold_rows(policy: Policy, src_text) -> list[dict[str, str]]:
    """One row per policy threshold (map settings one row per entry, isolation one row per pair)."""
    rows = []
    for key in POLICY_KEYS:
        if key == "cosite_services":
            continue
        value, source = getattr(policy, key), policy_source(policy, key)
        if key == "min_isolation_db":
            entries = [(f"{key}: {' + '.join(rule.services)}", rule.isolation_db, rule.where("isolation_db"))
                       for rule in value]
        elif key in ("vswr_limit_by_service", "feeder_loss_budget_db"):
            entries = [(f"{key}.{sub}", v, policy.where(f"{key}.{sub}")) for sub, v in value.items()]
        else:
            entries = [(key, value, policy.where(key))]
        for name, entry_value, where in entries:
            override = "" if shipped(where.path) else "set by the fleet's policy"
            rows.append(_row("Policy", name, entry_value, source, where, src_text, override))
    return rows


def service_threshold_rows(service: Service, policy: Policy, src_text) -> list[dict[str, str]]:
    """A service's band, its must_see figures and its co-site figures, each with its standing; a co-site
    figure the fleet's policy replaces says so, with the policy's value and source."""
    own = "" if shipped(service.where("bands_mhz").path) else "the fleet's service table replaces this service"
    rows = [_row("Service table", f"{service.id}: bands_mhz", service.bands_mhz, service.source,
                 service.where("bands_mhz"), src_text, own)]
    if service.must_see:
        need = {k: v for k, v in service.must_see.items() if k != "source"}
        rows.append(_row("Service table", f"{service.id}: must_see", need, str(service.must_see.get("source", "")),
                         service.where("must_see"), src_text, own))
    overrides = policy.cosite_services.get(service.id, {})
    for key, source in service.sources.items():
        override = own
        if key in overrides:
            value, policy_text = overrides[key][0], overrides[key][1]
            override = f"fleet policy: {_value_text(value, key)} ({policy_text})"
        rows.append(_row("Co-site", f"{service.id}: {key}", getattr(service, key, ""), str(source),
                         service.where(key), src_text, override))
    return rows


def threshold_rows(fleet: Fleet, src_text) -> list[dict[str, str]]:
    """Every threshold in force: the policy's, then each service's, in the order the files list them."""
    rows = policy_threshold_rows(fleet.policy, src_text)
    for service in fleet.services.values():
        rows.extend(service_threshold_rows(service, fleet.policy, src_text))
    return rows


def standing_counts(rows: list[dict[str, str]]) -> dict[str, int]:
    counts = {word: 0 for word in STANDINGS + (NOT_GIVEN,)}
    for row in rows:
        counts[row["standing"]] += 1
    return counts
