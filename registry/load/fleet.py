"""Load a registry folder into a `Fleet`, or raise `DataError` with every problem found.

Three passes, each collecting problems rather than stopping at the first:
1. read each file (`yamlsource`: syntax, encoding, size, duplicate keys, aliases);
2. validate it against its JSON Schema (`schemacheck`), each error on the line it concerns;
3. build the model from the files that passed, then check what a schema cannot (`integrity`):
   references, unique ids, ordered bands, sweep files present, and so on.
The package's service table and default policy (`registry/data/`) are read the same way, and the fleet's
`services.yaml` and `policy.yaml` are laid over them.
"""
from __future__ import annotations

from datetime import date
from pathlib import Path
from typing import Any

from registry.load import build, extent, git, inputs, integrity, modifications, partial, plausible
from registry.load import policy_cosite, schemacheck
from registry.incremental import DiskCache, cached_map, key_of
from registry.core.errors import FILE_FIELD, DataError, Problem, Src
from registry.core.base import FrozenMap
from registry.core.model import (REQUIRED_POLICY_KEYS, Aircraft, Airframe, AntennaModel, Cable, Fleet,
                                 Installation, IsolationRule, Policy, Review, Service)
from registry.load.partial import AircraftRead
from registry.load.yamlsource import YamlDoc, read_yaml

SHIPPED_DIR = Path(__file__).parent.parent / "data"
_COSITE_POLICY = {"cosite_max_harmonic_order": int, "cosite_small_margin_db": float}
_REVIEW_POLICY = {"action_raised_counts_open": bool}
_MERGED_POLICY_MAPS = ("vswr_limit_by_service", "feeder_loss_budget_db", "sources")
_COVERAGE_POLICY = ("coverage_bank_deg", "coverage_pitch_deg")  # maps by must_see region, merged key by key


REGISTRY_FILES = ("fleet.yaml", "antennas.yaml", "cables.yaml", "services.yaml", "policy.yaml", "reviews.yaml",
                  "modifications.yaml")
REGISTRY_FOLDERS = ("airframes", "aircraft")
"""What the loader reads from a data folder: these files, and the YAML files of these folders."""


def load_fleet(data_dir: Path | str, shipped_dir: Path | None = None, cache_dir: Path | None = None,
               workers: int = 1, as_of: date | None = None) -> Fleet:
    """Read, validate and cross-check the registry in `data_dir`.

    `shipped_dir` holds the package's `services.yaml` and `policy.yaml` (default: `registry/data/`).
    `cache_dir` (optional) keeps each file's parsed and schema-checked form, keyed by its bytes, so an
    unchanged file is not parsed again; the others are parsed in `workers` processes. A review may not be
    dated after `as_of` (default: the registry's as-of date, `git.as_of_date`) or today, whichever is
    later (`git.review_limit`). Every file read must lie inside `data_dir` once links are followed.
    Raises DataError listing every problem, sorted by file and line.
    """
    return _Run(Path(data_dir), shipped_dir or SHIPPED_DIR, cache_dir, workers, as_of).load()


Parsed = tuple[YamlDoc | None, list[Problem]]


def parse(file: Path, kind: str, cache: DiskCache) -> Parsed:
    """One file read and checked against its schema: the document and its problems, from the cache
    when the same bytes were seen before."""
    return parse_many([file], kind, cache)[0]


def parse_many(files: list[Path], kind: str, cache: DiskCache, workers: int = 1) -> list[Parsed]:
    """`parse` for each file, in order; files not in the cache are shared out over `workers` processes."""
    keys = [_file_key(kind, file) if cache.folder is not None else None for file in files]
    return cached_map(lambda file: _parse_fresh(file, kind), files, keys, _Rechecked(cache, kind), workers)


class _Rechecked:
    """The parsed files' cache, each document without problems checked against its schema again as it is
    read back: a document's data is plain values of any type (`YamlDoc.data`), so an entry forged with a
    correct checksum could hold a date or a text where the schema wants a number, which the builders would
    stumble on. Such an entry is a miss (removed, the file parsed again), as a damaged one is."""

    def __init__(self, cache: DiskCache, kind: str):
        self.cache, self.kind = cache, kind

    def get(self, key: str) -> Parsed | None:
        found = self.cache.get(key)
        if found is not None and found[0] is not None and not found[1] and not schemacheck.passes(found[0], self.kind):
            self.cache.discard(key)
            return None
        return found

    def put(self, key: str, value: Parsed) -> None:
        self.cache.put(key, value)


def _file_key(kind: str, file: Path) -> str | None:
    """Cache key of what is made of a file's bytes; None when it cannot be read (`read_yaml` reports it)."""
    try:
        return key_of(kind, str(file), file.read_bytes())
    except OSError:
        return None


def _read_aircraft(file: Path) -> AircraftRead:
    """An aircraft file read, checked against its schema and built into its model; with its problems
    (and, when it has some, what could be built of it: `partial.read_on`)."""
    doc, problems = _parse_fresh(file, "aircraft")
    if doc is None:
        return AircraftRead(None, problems)
    if problems:
        return partial.read_on(build.Doc(doc, file), problems)
    return AircraftRead(*build.aircraft(build.Doc(doc, file)))


def _parse_fresh(file: Path, kind: str) -> Parsed:
    doc, problems = read_yaml(file, str(file))
    if doc is not None:
        reported = {problem.field for problem in problems}  # a value the reader refused is not judged again
        problems = problems + [problem for problem in schemacheck.check(doc, kind) if problem.field not in reported]
    return doc, problems


class _Run:
    def __init__(self, data_dir: Path, shipped_dir: Path, cache_dir: Path | None, workers: int = 1,
                 as_of: date | None = None):
        self.data_dir = data_dir
        self.resolved_dir = data_dir.resolve()  # once: every file read is checked to lie inside it
        self.as_of = as_of
        self.shipped_dir = shipped_dir
        self.cache = DiskCache(cache_dir, "files", Parsed)
        self.models = DiskCache(cache_dir, "models", AircraftRead)
        self.workers = workers
        self.file_keys: dict[str, str | None] = {}
        self.problems: list[Problem] = []
        self.partial: list[Aircraft] = []  # built from files with problems, for checking only
        self.loose: list[Installation] = []

    def problem(self, file: Path, found: str, expected: str) -> None:
        self.problems.append(Problem.at(Src(str(file), 1, 1), FILE_FIELD, found, expected))

    def read(self, file: Path, kind: str, required: bool = True) -> build.Doc | None:
        """The file read and validated, or None (its problems recorded; a missing required file is one)."""
        if not file.is_file() and not file.is_symlink():
            if required:
                self.problem(file, "no such file", f"{file.name} ({kind} file, required)")
            return None
        if file.parent != self.shipped_dir and not self.inside(file):
            return None
        return self.accept(file, *parse(file, kind, self.cache))

    def inside(self, file: Path) -> bool:
        """Whether `file`, its links followed, is a regular file inside the registry folder; a problem if
        not (nothing of it is read, so nothing of it is shown)."""
        target = file.resolve()
        if not target.is_relative_to(self.resolved_dir):
            self.problem(file, "a link to a file outside the registry folder",
                         f"a file inside {self.data_dir} (links are followed, and must stay inside)")
            return False
        if not target.is_file():
            self.problem(file, "something that is not a regular file", "a YAML file")
            return False
        return True

    def accept(self, file: Path, doc: YamlDoc | None, problems: list[Problem]) -> build.Doc | None:
        self.problems.extend(problems)
        return build.Doc(doc, file) if doc is not None and not problems else None

    def folder_files(self, name: str) -> list[Path]:
        """The .yaml files of a folder of the registry, sorted; a stray .yml or no file at all is a problem."""
        folder = self.data_dir / name
        files = sorted(file for file in folder.glob("*.yaml") if self.inside(file)) if folder.is_dir() else []
        for stray in sorted(folder.glob("*.yml")) if folder.is_dir() else []:
            self.problem(stray, "a file ending in .yml", "the ending .yaml (other endings are not read)")
        if not files:
            self.problem(folder, "no .yaml files", f"at least one {name}/<id>.yaml file")
        return files

    def read_folder(self, name: str, kind: str) -> list[build.Doc | None]:
        files = self.folder_files(name)
        if not files:
            return [None]  # like a file that failed: references into this folder cannot be checked
        parsed = parse_many(files, kind, self.cache, self.workers)
        return [self.accept(file, doc, problems) for file, (doc, problems) in zip(files, parsed)]

    def read_aircraft(self) -> list[Aircraft]:
        """The aircraft files as model objects. Each file's model, with the problems found in reading and
        building it, is kept in the cache by the file's bytes: an unchanged aircraft is neither parsed nor
        built again (a fleet has a thousand of them). The others are read in `workers` processes."""
        files = self.folder_files("aircraft")
        keys = [_file_key("aircraft-model", file) if self.models.folder is not None else None for file in files]
        self.file_keys = {str(file): key for file, key in zip(files, keys)}
        built = cached_map(_read_aircraft, files, keys, self.models, self.workers)
        models = []
        for read in built:
            self.problems += read.problems
            if read.model is not None:
                models.append(read.model)
            self.partial += [read.partial] if read.partial is not None else []
            self.loose += read.loose
        return models

    def load(self) -> Fleet:
        if not self.data_dir.is_dir():
            self.problem(self.data_dir, "no folder", "a registry folder holding fleet.yaml")
            raise DataError(self.problems)
        fleet_doc = self.read(self.data_dir / "fleet.yaml", "fleet")
        airframe_docs = self.read_folder("airframes", "airframe")
        aircraft = self.read_aircraft()
        antennas_doc = self.read(self.data_dir / "antennas.yaml", "antennas")
        cables_doc = self.read(self.data_dir / "cables.yaml", "cables")
        shipped_services = self.read(self.shipped_dir / "services.yaml", "services")
        fleet_services = self.read(self.data_dir / "services.yaml", "services", required=False)
        shipped_policy = self.read(self.shipped_dir / "policy.yaml", "policy")
        fleet_policy = self.read(self.data_dir / "policy.yaml", "policy", required=False)
        reviews_doc = self.read(self.data_dir / "reviews.yaml", "reviews", required=False)
        mods_doc = self.read(self.data_dir / "modifications.yaml", "modifications", required=False)

        airframes = [build.airframe(doc) for doc in airframe_docs if doc]
        antennas = [build.antenna(antennas_doc, n, item) for n, item in enumerate(antennas_doc.data["models"])] \
            if antennas_doc else None
        cables = [build.cable(cables_doc, n, item) for n, item in enumerate(cables_doc.data["cables"])] \
            if cables_doc else None
        services = self.services(shipped_services, fleet_services)
        policy = self.policy(shipped_policy, fleet_policy)
        if services is not None and policy is not None:
            services = [build.with_attitudes(service, policy) for service in services]
        reviews = [build.review(reviews_doc, n, item) for n, item in enumerate(reviews_doc.data["reviews"])] \
            if reviews_doc else []

        self.cross_check(airframe_docs, airframes, aircraft, antennas, cables, services, policy, reviews)
        mods = self.modifications(mods_doc, aircraft, antennas, services)
        if self.problems:
            raise DataError(self.problems)
        sweeps = inputs.read_sweeps(inputs.sweep_files(aircraft))
        keys = inputs.aircraft_keys(aircraft, inputs.shared_key(self.data_dir, self.shipped_dir), sweeps,
                                    self.file_keys) \
            if self.cache.folder is not None else {}
        return Fleet(
            **fleet_doc.at(),
            operator=fleet_doc.data["operator"],
            title=fleet_doc.data.get("title"),
            data_dir=self.data_dir,
            airframes=build.by_id(airframes),
            aircraft=build.by_id(aircraft),
            antennas=build.by_id(antennas),
            cables=build.by_id(cables),
            services=build.by_id(services),
            policy=policy,
            reviews=FrozenMap((review.discrepancy, review) for review in reviews),
            sweeps=FrozenMap(sweeps),
            input_keys=FrozenMap(keys),
            modifications=tuple(mods),
        )

    def modifications(self, doc: build.Doc | None, aircraft: list[Aircraft], antennas: list[AntennaModel] | None,
                      services: list[Service] | None) -> list:
        """The fleet's modifications file built and checked (none without the file); aircraft files with
        problems are still named (`partial`)."""
        if doc is None:
            return []
        mods, unknown = modifications.build(doc, aircraft + self.partial)
        known = integrity.Catalogue(airframes=None, cables=None,
                                    antennas=None if antennas is None else {item.id for item in antennas},
                                    services=None if services is None else {item.id for item in services})
        # with a problem in the aircraft files the registrations are a guess (a file not read, a mark written
        # twice): that problem is reported, an aircraft the modifications name is not reported again
        folder = str(self.data_dir / "aircraft")
        guess = any(problem.path.startswith(folder) for problem in self.problems)
        self.problems += ([] if guess else unknown) + modifications.check(mods, known)
        return mods


    def cross_check(self, airframe_docs: list[build.Doc | None], airframes: list[Airframe], aircraft: list[Aircraft],
                    antennas: list[AntennaModel] | None, cables: list[Cable] | None, services: list[Service] | None,
                    policy: Policy | None, reviews: list[Review]) -> None:
        """What a schema cannot check, over the files that passed theirs (and the sound parts of aircraft
        files that did not: `partial`)."""
        catalogue = integrity.Catalogue(
            # an id that differs from its file name is reported once, not again at each reference to it
            airframes=None if None in airframe_docs else {name for item in airframes for name in build.names(item)},
            antennas=None if antennas is None else {item.id for item in antennas},
            cables=None if cables is None else {item.id for item in cables},
            services=None if services is None else {item.id for item in services},
        )
        self.problems += integrity.check_airframes(airframes)
        self.problems += integrity.check_antennas(antennas or [])
        self.problems += plausible.check_antennas(antennas or [])
        self.problems += integrity.check_cables(cables or [])
        self.problems += integrity.check_services(services or [])
        checked = aircraft + self.partial
        self.problems += integrity.check_aircraft(checked, catalogue, self.data_dir)
        for installation in self.loose:
            self.problems += integrity.check_installation(installation, catalogue, self.data_dir)
        self.problems += extent.check_locations(checked, {name: item for item in airframes
                                                         for name in build.names(item)})
        self.problems += integrity.check_reviews(reviews)
        if reviews:
            limit = git.review_limit(self.as_of or git.as_of_date(self.data_dir))
            self.problems += integrity.future_reviews(reviews, limit)
        if policy is not None:
            self.problems += integrity.check_policy(policy, catalogue)
            self.problems += policy_cosite.check(policy, services)

    def services(self, shipped: build.Doc | None, fleet: build.Doc | None) -> list[Service] | None:
        """The shipped table with the fleet's entries added or replacing those of the same id."""
        if shipped is None or (fleet is None and (self.data_dir / "services.yaml").is_file()):
            return None
        table: dict[str, Service] = {}
        for doc in (shipped, fleet):
            services = build.services(doc, shipped=doc is shipped) if doc else []
            self.problems += integrity.duplicates(services, "id", "service id in this file")
            table.update((item.id, item) for item in services)
        return list(table.values())

    def policy(self, shipped: build.Doc | None, fleet: build.Doc | None) -> Policy | None:
        """The shipped defaults with the fleet's keys laid over them (maps merged key by key)."""
        if shipped is None or (fleet is None and (self.data_dir / "policy.yaml").is_file()):
            return None
        layers = [doc for doc in (fleet, shipped) if doc]
        merged: dict[str, Any] = {}
        for doc in reversed(layers):
            for key, value in doc.data.items():
                if key in _MERGED_POLICY_MAPS + _COVERAGE_POLICY:
                    merged[key] = {**merged.get(key, {}), **value}
                elif key == policy_cosite.KEY:
                    merged[key] = policy_cosite.merge(merged.get(key, {}), value)
                else:
                    merged[key] = value  # min_isolation_db rules are merged pair by pair below
        missing = [key for key in REQUIRED_POLICY_KEYS if key not in merged]
        if "default" not in merged.get("feeder_loss_budget_db", {"default": 0}):
            missing.append("feeder_loss_budget_db.default")
        for key in missing:
            self.problems.append(Problem.at(shipped.at()["src"], key, "nothing",
                                            f"a value here or in {self.data_dir / 'policy.yaml'}"))
        if missing:
            return None
        rules: dict[tuple[str, ...], IsolationRule] = {}
        for doc in reversed(layers):
            layer = [IsolationRule(**doc.at("min_isolation_db", n), services=tuple(item["services"]),
                                   isolation_db=float(item["isolation_db"]))
                     for n, item in enumerate(doc.data.get("min_isolation_db", []))]
            self.problems += integrity.duplicate_pairs(layer)
            rules.update((tuple(sorted(rule.services)), rule) for rule in layer)
        top = layers[0]
        return Policy(
            src=top.at()["src"],
            locator=build.LayeredLocator([doc.at()["locator"] for doc in layers]),
            length_tolerance_pct=float(merged["length_tolerance_pct"]),
            vswr_limit=float(merged["vswr_limit"]),
            vswr_limit_by_service=FrozenMap({k: float(v) for k, v in merged["vswr_limit_by_service"].items()}),
            feeder_loss_budget_db=FrozenMap({k: float(v) for k, v in merged["feeder_loss_budget_db"].items()}),
            connector_loss_db=float(merged["connector_loss_db"]),
            adapter_loss_db=float(merged["adapter_loss_db"]),
            measurement_max_age_days=int(merged["measurement_max_age_days"]),
            ground_plane_min_radius_wavelengths=float(merged["ground_plane_min_radius_wavelengths"]),
            min_isolation_db=tuple(rules[pair] for pair in sorted(rules)),
            sources=FrozenMap(merged.get("sources", {})),
            **{key: kind(merged[key]) for key, kind in _COSITE_POLICY.items() if key in merged},
            **{key: FrozenMap({k: float(v) for k, v in merged[key].items()}) for key in _COVERAGE_POLICY if key in merged},
            cosite_services=policy_cosite.build(merged.get(policy_cosite.KEY, {})),
            **{key: kind(merged[key]) for key, kind in _REVIEW_POLICY.items() if key in merged},
        )
