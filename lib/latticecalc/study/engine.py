"""The study: a space-filling screen, a multi-objective search, then the finalists through the costlier stages.

1. **Screen**: a scrambled Sobol sequence (:class:`scipy.stats.qmc.Sobol`) over the unit cube of the
   design space, evaluated by hand.
2. **Search**: NSGA-II from pymoo (ask-and-tell) on the hand outputs, starting from the screen. pymoo is
   used because it is a maintained library built for constrained multi-objective search over mixed
   variables, with a seeded, reproducible NSGA-II and an ask-and-tell interface that leaves the evaluation
   (and so its caching and its distribution) to us.
3. **Bloch**: the best hand-feasible designs (non-dominated rank, then the insertion-loss objective) get the
   reduced Bloch model, which confirms the complete gap and the band it holds under scatter.
4. **Coupled**: the best Bloch-feasible designs get the coupled column model; its insertion loss at the
   floor ranks them, and the Pareto set (panel mass against insertion-loss margin) is what the study reports.

Every evaluation goes through :func:`~latticecalc.study.evaluate.evaluate_stage` (the result cache inside
the study folder, keyed by fingerprint), in a :class:`SerialExecutor` or on Dask (:class:`DaskExecutor`: a
local cluster, or a scheduler given by address). Results do not depend on the executor: the search is
seeded and each batch is gathered in the order it was submitted.
"""

from __future__ import annotations

import json
import math
import sys
import time
import warnings
from collections.abc import Callable, Mapping, Sequence
from dataclasses import dataclass, field
from pathlib import Path
from typing import Any

import numpy as np

from latticecalc.errors import InputError, LatticeCalcError
from latticecalc.study.evaluate import STAGES, design_fingerprint, evaluate_stage, full_design
from latticecalc.study.requirement import StudyContext
from latticecalc.study.space import DesignSpace


class SchedulerError(LatticeCalcError, ConnectionError):
    """The Dask scheduler named by address cannot be reached."""


@dataclass(frozen=True, kw_only=True)
class Objective:
    """An output to minimise (``sense="min"``) or maximise (``"max"``)."""

    output: str
    sense: str = "min"

    def __post_init__(self) -> None:
        if self.sense not in ("min", "max"):
            raise InputError("an objective is minimised or maximised", input_name=f"objective {self.output}",
                             expected="min or max", got=repr(self.sense))


@dataclass(frozen=True, kw_only=True)
class Constraint:
    """An output that must lie from ``minimum`` to ``maximum`` (a missing output or an errored design fails it)."""

    output: str
    minimum: float = 0.0
    maximum: float = math.inf

    @property
    def limits_text(self) -> str:
        """The limits as a reader writes them: ``≥ 0``, ``≤ 1`` or ``0 … 1`` (never ``inf``)."""
        from latticecalc.units import format_number

        if math.isinf(self.maximum):
            return f"≥ {format_number(self.minimum)}"
        if math.isinf(self.minimum):
            return f"≤ {format_number(self.maximum)}"
        return f"{format_number(self.minimum)} … {format_number(self.maximum)}"

    def shortfall(self, value: Any) -> float:
        """How far ``value`` lies outside the limits (0 inside; 1e6 for a missing or non-finite value)."""
        if not isinstance(value, float) or not math.isfinite(value):
            return 1e6
        return max(0.0, self.minimum - value, value - self.maximum)


#: The hand stage's objectives and constraints unless a study names others.
HAND_OBJECTIVES = (Objective(output="panel_mass", sense="min"), Objective(output="il_margin", sense="max"))
HAND_CONSTRAINTS = tuple(Constraint(output=o) for o in ("fits", "coverage_margin", "buckling_margin",
                                                         "shortening_margin", "mass_margin", "thickness_margin"))
BLOCH_CONSTRAINTS = (Constraint(output="has_gap"), Constraint(output="coverage_margin_bloch"))
COUPLED_OBJECTIVES = (Objective(output="panel_mass", sense="min"), Objective(output="il_margin_coupled", sense="max"))
COUPLED_CONSTRAINTS = (Constraint(output="il_margin_coupled"),)


@dataclass(frozen=True, kw_only=True)
class StudySettings:
    """How many designs each step sees, the seed, and the objectives and constraints of each stage."""

    screen: int = 64
    population: int = 24
    generations: int = 8
    bloch: int = 10
    coupled: int = 3
    seed: int = 1
    objectives: tuple[Objective, ...] = HAND_OBJECTIVES
    constraints: tuple[Constraint, ...] = HAND_CONSTRAINTS
    bloch_constraints: tuple[Constraint, ...] = BLOCH_CONSTRAINTS
    coupled_constraints: tuple[Constraint, ...] = COUPLED_CONSTRAINTS
    stages: tuple[str, ...] = STAGES

    def __post_init__(self) -> None:
        for name in ("screen", "population", "generations", "bloch", "coupled"):
            v = getattr(self, name)
            if isinstance(v, bool) or not isinstance(v, int) or v < 0:
                raise InputError("a count of designs is a whole number >= 0", input_name=f"search.{name}",
                                 expected=">= 0", got=repr(v))
        if self.screen < 1:
            raise InputError("the screen needs at least one design", input_name="search.screen", expected=">= 1",
                             got=repr(self.screen))
        if not self.objectives:
            raise InputError("a study needs at least one objective", input_name="objectives", expected=">= 1",
                             got="none")
        bad = [s for s in self.stages if s not in STAGES]
        if bad or not self.stages or self.stages[0] != "hand":
            raise InputError("stages run hand first, then bloch, then coupled", input_name="stages",
                             expected="hand[, bloch[, coupled]]", got=repr(self.stages))


# --------------------------------------------------------------------------------------------------------
# executors
# --------------------------------------------------------------------------------------------------------
def _task(args: tuple) -> tuple[dict[str, float], bool]:
    stage, design, context, store = args
    return evaluate_stage(stage, design, context, store)


class SerialExecutor:
    """Evaluates in this process, one design after another."""

    name = "serial"
    workers = 1

    def map(self, items: Sequence[tuple]) -> list:
        """Results of :func:`_task` for each item, in order."""
        return [_task(it) for it in items]

    def close(self) -> None:
        """Nothing to release."""


def _refused_at_once(address: str, *, timeout: float) -> None:
    """Raise ConnectionRefusedError when nothing listens at a ``tcp://host:port`` address.

    Dask's client retries a refused connection until its whole timeout has passed (ten seconds by default);
    a host that answers "nothing here" is told at once. Other addresses (and a host that does not answer)
    are left to the client.
    """
    import socket
    from urllib.parse import urlsplit

    parts = urlsplit(address)
    if parts.scheme != "tcp" or not parts.hostname or parts.port is None:
        return
    try:
        socket.create_connection((parts.hostname, parts.port), timeout=min(timeout, 2.0)).close()
    except ConnectionRefusedError:
        raise
    except OSError:
        return     # no answer in time, or a name to resolve: the client's own timeout decides


class DaskExecutor:
    """Evaluates on Dask: a local cluster on this machine's cores, or an existing scheduler by address."""

    name = "dask"

    def __init__(self, *, address: str | None = None, workers: int = 2, timeout: float = 10.0) -> None:
        from distributed import Client, LocalCluster

        self._cluster = None
        if address:
            try:
                _refused_at_once(address, timeout=timeout)
                self.client = Client(address, timeout=f"{timeout}s")
            except (OSError, TimeoutError, ValueError) as exc:
                raise SchedulerError("cannot reach the Dask scheduler", input_name="--scheduler",
                                     expected="a running scheduler, e.g. tcp://host:8786", got=repr(address),
                                     hint=f"Start it (dask scheduler) or check the address ({type(exc).__name__})",
                                     ) from None
        else:
            self._cluster = LocalCluster(n_workers=workers, threads_per_worker=1, processes=True,
                                         dashboard_address=None, silence_logs=40)
            self.client = Client(self._cluster)
        self.workers = max(1, len(self.client.scheduler_info(n_workers=-1).get("workers", {})) or workers)
        self.address = address or self._cluster.scheduler_address

    def map(self, items: Sequence[tuple]) -> list:
        """Results of :func:`_task` for each item, in submission order."""
        futures = self.client.map(_task, list(items), pure=False)
        return self.client.gather(futures)

    def close(self) -> None:
        """Close the client, and the local cluster when this executor started it."""
        self.client.close()
        if self._cluster is not None:
            self._cluster.close()


# --------------------------------------------------------------------------------------------------------
# ranking
# --------------------------------------------------------------------------------------------------------
def _violation(out: Mapping[str, Any], constraints: Sequence[Constraint]) -> list[str]:
    """Names of the constraints a design's outputs fail (errored designs fail all)."""
    if out.get("error", 0.0) > 0:
        return ["error"]
    return [c.output for c in constraints if c.shortfall(out.get(c.output)) > 0]


def _violation_amount(out: Mapping[str, Any], constraints: Sequence[Constraint]) -> float:
    if out.get("error", 0.0) > 0:
        return math.inf
    return float(sum(c.shortfall(out.get(c.output)) for c in constraints))


def _objective_matrix(outs: Sequence[Mapping[str, Any]], objectives: Sequence[Objective]) -> np.ndarray:
    F = np.full((len(outs), len(objectives)), 1e12)
    for i, o in enumerate(outs):
        for j, ob in enumerate(objectives):
            v = o.get(ob.output)
            if isinstance(v, float) and math.isfinite(v):
                F[i, j] = v if ob.sense == "min" else -v
    return F


def pareto_mask(F: np.ndarray) -> np.ndarray:
    """Rows of ``F`` (to be minimised) that no other row dominates."""
    n = len(F)
    keep = np.ones(n, bool)
    for i in range(n):
        dominated = np.all(F <= F[i], axis=1) & np.any(F < F[i], axis=1)
        keep[i] = not dominated.any()
    return keep


def _rank(outs: Sequence[Mapping[str, Any]], objectives: Sequence[Objective]) -> list[int]:
    """Indices ordered by non-dominated front, then by the last objective, then by the first."""
    if not outs:
        return []
    from pymoo.util.nds.non_dominated_sorting import NonDominatedSorting

    F = _objective_matrix(outs, objectives)
    fronts = NonDominatedSorting().do(F)
    front_of = np.empty(len(outs), int)
    for k, fr in enumerate(fronts):
        front_of[fr] = k
    return sorted(range(len(outs)), key=lambda i: (front_of[i], F[i, -1], F[i, 0], i))


# --------------------------------------------------------------------------------------------------------
# the study
# --------------------------------------------------------------------------------------------------------
@dataclass(frozen=True, kw_only=True)
class DesignRecord:
    """One design the study evaluated: its id, values, outputs per stage and what it lacks at each."""

    id: str
    design: Mapping[str, Any]
    outputs: Mapping[str, Mapping[str, Any]]
    lacks: Mapping[str, tuple[str, ...]]

    @property
    def stage(self) -> str:
        """The last stage this design reached."""
        return [s for s in STAGES if s in self.outputs][-1]

    def feasible(self, stage: str) -> bool:
        """Evaluated at ``stage`` and failing none of its constraints."""
        return stage in self.outputs and not self.lacks.get(stage)


@dataclass(frozen=True, kw_only=True)
class StudyResult:
    """The evaluated designs, the Pareto set of the last stage run, and what was computed (not cached)."""

    records: tuple[DesignRecord, ...]
    pareto: tuple[str, ...]
    nearest: tuple[str, ...]
    computed: tuple[tuple[str, str], ...]
    counts: Mapping[str, int]
    seconds: Mapping[str, float]
    executor: str
    final_stage: str
    objectives: tuple[Objective, ...] = field(default=COUPLED_OBJECTIVES)

    def record(self, design_id: str) -> DesignRecord:
        """The record of ``design_id``."""
        for r in self.records:
            if r.id == design_id:
                return r
        raise InputError("no such design in the study", input_name="design", expected="an id from the study's table",
                         got=repr(design_id))

    @property
    def met(self) -> bool:
        """True when at least one design meets every constraint of the last stage run."""
        return bool(self.pareto)

    def pareto_rows(self, space: DesignSpace | None = None) -> list[list[str]]:
        """(id, design values, mass, margin) rows of the Pareto set (or of the nearest designs).

        With ``space``, the values are in :meth:`DesignSpace.display_names` order, the zone variables as one
        ``zones`` text ("2 zones: 24 mm / 30 mm …", each zone as evaluated); without, every variable as given.
        """
        from latticecalc.units import format_number, format_value

        rows = []
        for did in self.pareto or self.nearest:
            r = self.record(did)
            # every stage's outputs: a design stopped at the Bloch stage keeps the hand objectives it was ranked by
            out = _merged(r.outputs)
            hand = r.outputs["hand"]
            values = (space.display_values(r.design, r.outputs["hand"]) if space is not None
                      else [format_value(v) for v in r.design.values()])
            rows.append([did] + values
                        + [format_number(hand.get("panel_mass"), 3)]
                        + [format_number(out.get(o.output), 3) for o in self.objectives if o.output != "panel_mass"]
                        + ["; ".join(r.lacks.get(self.final_stage, ())) or "meets every check"])
        return rows

    def as_json(self) -> dict[str, Any]:
        """Plain data for the study's results file."""
        return {"final_stage": self.final_stage, "executor": self.executor, "counts": dict(self.counts),
                "seconds": dict(self.seconds), "pareto": list(self.pareto), "nearest": list(self.nearest),
                "objectives": [{"output": o.output, "sense": o.sense} for o in self.objectives],
                "designs": [{"id": r.id, "design": dict(r.design),
                             "outputs": {k: dict(v) for k, v in r.outputs.items()},
                             "lacks": {k: list(v) for k, v in r.lacks.items()}} for r in self.records]}


Progress = Callable[[str, int, int, str, float], None]


def print_progress(stage: str, done: int, total: int, best: str, left: float) -> None:
    """Default progress: one rewritten line on standard error with counts, the best so far and time left."""
    eta = "" if not math.isfinite(left) else f" · about {left:.0f} s left"
    sys.stderr.write(f"\r{stage:<8} {done:>5}/{total:<5} · best so far: {best}{eta}   ")
    if done >= total:
        sys.stderr.write("\n")
    sys.stderr.flush()


def _best_text(outs: Sequence[Mapping[str, Any]], objectives: Sequence[Objective],
               constraints: Sequence[Constraint]) -> str:
    feas = [o for o in outs if not _violation(o, constraints)]
    if not feas:
        return "none feasible yet"
    o = feas[_rank(feas, objectives)[0]]
    return ", ".join(f"{ob.output} {o.get(ob.output, float('nan')):.3g}" for ob in objectives)


def run_study(space: DesignSpace, context: StudyContext, *, settings: StudySettings = StudySettings(),
              store: str | Path | None, executor: Any = None, progress: Progress | None = None) -> StudyResult:
    """Run the staged study over ``space`` for ``context``; evaluations cached in ``store`` (a folder).

    Parameters
    ----------
    space:
        The design space (:func:`~latticecalc.study.space.space_from_table`).
    context:
        Requirement and fixed design (:func:`~latticecalc.study.requirement.context_from_project`).
    settings:
        Counts per step, seed, objectives and constraints of the hand stage.
    store:
        Folder of the persisted evaluations (by stage, by fingerprint); ``None`` keeps nothing.
    executor:
        :class:`SerialExecutor` (default) or :class:`DaskExecutor`.
    progress:
        ``callback(stage, done, total, best, seconds_left)`` or None.
    """
    from pymoo.algorithms.moo.nsga2 import NSGA2
    from pymoo.core.evaluator import Evaluator
    from pymoo.core.problem import Problem
    from pymoo.core.termination import NoTermination
    from pymoo.problems.static import StaticProblem
    from scipy.stats import qmc

    if space.dimension == 0:
        from latticecalc.study.space import DesignSpaceError

        raise DesignSpaceError("the design space is empty: nothing to search", input_name="space")
    executor = executor or SerialExecutor()
    store_s = str(store) if store is not None else None
    hand_out: dict[str, dict[str, Any]] = {}      # hand fingerprint -> outputs
    designs: dict[str, dict[str, Any]] = {}       # hand fingerprint -> design (space variables only)
    computed: list[tuple[str, str]] = []
    counts = {s: 0 for s in STAGES}
    seconds = {s: 0.0 for s in STAGES}
    objectives, constraints = settings.objectives, settings.constraints

    def _report(stage: str, done: int, total: int, results: list, t0: float, sent: int) -> None:
        rate = (time.perf_counter() - t0) / max(1, sent)
        cons = constraints if stage == "hand" else (settings.bloch_constraints if stage == "bloch"
                                                    else settings.coupled_constraints)
        obs = objectives if stage == "hand" else COUPLED_OBJECTIVES
        progress(stage, done, total, _best_text([r for r in results if r], obs, cons), rate * (total - done))

    def evaluate(stage: str, batch: list[dict[str, Any]], total: int, done0: int) -> list[dict[str, Any]]:
        keys = [design_fingerprint(stage, d, context) for d in batch]
        results: list[dict[str, Any]] = [{}] * len(batch)
        # each distinct design once: a design already evaluated by hand, or met earlier in this batch, is not sent
        first: dict[str, int] = {}
        for i, k in enumerate(keys):
            if not (stage == "hand" and k in hand_out):
                first.setdefault(k, i)
        todo = sorted(first.values())
        # a batch waits for its slowest design: on Dask, large batches keep the workers busy (progress is
        # shown after each); in this process, small ones keep the progress line moving
        workers = getattr(executor, "workers", 1)
        chunk = 25 * workers if getattr(executor, "name", "") == "dask" else 4
        t0 = time.perf_counter()
        for start in range(0, len(todo), chunk):
            part = todo[start:start + chunk]
            got = executor.map([(stage, batch[i], context, store_s) for i in part])
            for i, (out, was_computed) in zip(part, got):
                results[i] = out
                if was_computed:
                    computed.append((stage, keys[i]))
                    counts[stage] += 1
            if progress is not None and start + len(part) < len(todo):
                _report(stage, done0 + start + len(part), total, results, t0, start + len(part))
        seconds[stage] += time.perf_counter() - t0
        for i, k in enumerate(keys):
            if not results[i]:
                results[i] = hand_out[k] if stage == "hand" and k in hand_out else results[first[k]]
        if progress is not None:
            _report(stage, done0 + len(batch), total, results, t0, max(1, len(todo)))
        if stage == "hand":
            for k, d, r in zip(keys, batch, results):
                hand_out.setdefault(k, r)
                designs.setdefault(k, d)
        return results

    # 1. screen
    n_screen = settings.screen
    sob = qmc.Sobol(d=space.dimension, scramble=True, seed=settings.seed)
    with warnings.catch_warnings():
        warnings.simplefilter("ignore")     # any count is allowed: balance is best at powers of 2, not required
        U = sob.random(n_screen)
    total_hand = n_screen + settings.population * settings.generations
    screen = [space.decode(u) for u in U]
    evaluate("hand", screen, total_hand, 0)

    # 2. NSGA-II on the hand outputs (ask and tell), started from the best of the screen
    if settings.generations > 0 and settings.population > 0:
        screen_out = [hand_out[design_fingerprint("hand", d, context)] for d in screen]
        place = {i: n for n, i in enumerate(_rank(screen_out, objectives))}
        order = sorted(range(n_screen), key=lambda i: (_violation_amount(screen_out[i], constraints), place[i]))
        start = U[order[:settings.population]]
        if len(start) < settings.population:
            extra = qmc.Sobol(d=space.dimension, scramble=True, seed=settings.seed + 1).random(
                settings.population - len(start))
            start = np.vstack([start, extra])
        problem = Problem(n_var=space.dimension, n_obj=len(objectives), n_ieq_constr=len(constraints),
                          xl=np.zeros(space.dimension), xu=np.ones(space.dimension))
        algorithm = NSGA2(pop_size=settings.population, sampling=start, eliminate_duplicates=True)
        algorithm.setup(problem, termination=NoTermination(), seed=settings.seed, verbose=False)
        done = n_screen
        for _gen in range(settings.generations):
            pop = algorithm.ask()
            X = pop.get("X")
            batch = [space.decode(x) for x in X]
            outs = evaluate("hand", batch, total_hand, done)
            done += len(batch)
            F = _objective_matrix(outs, objectives)
            # pymoo's constraints are G <= 0: each constraint's shortfall (an errored design fails them all)
            G = np.array([[1e6 if o.get("error", 0.0) > 0 else c.shortfall(o.get(c.output)) for c in constraints]
                          for o in outs]) if constraints else np.zeros((len(outs), 0))
            # pymoo's documented ask-and-tell: the values computed here are handed over as a static problem
            Evaluator().eval(StaticProblem(problem, F=F, G=G), pop)
            algorithm.tell(infills=pop)

    # 3. and 4. the costlier stages for the best designs of the stage before
    keys = list(hand_out)
    lacks: dict[str, dict[str, tuple[str, ...]]] = {k: {"hand": tuple(_violation(hand_out[k], constraints))}
                                                     for k in keys}
    outputs: dict[str, dict[str, dict[str, Any]]] = {k: {"hand": hand_out[k]} for k in keys}
    survivors = [k for k in keys if not lacks[k]["hand"]]
    final_stage = "hand"
    final_objectives = objectives
    stage_plan = [("bloch", settings.bloch, settings.bloch_constraints, objectives),
                  ("coupled", settings.coupled, settings.coupled_constraints, COUPLED_OBJECTIVES)]
    previous = "hand"
    for stage, n_keep, cons, obs in stage_plan:
        if stage not in settings.stages or n_keep == 0 or not survivors:
            break
        prev_obs = objectives if previous == "hand" else final_objectives
        ranked = [survivors[i] for i in _rank([_merged(outputs[k]) for k in survivors], prev_obs)][:n_keep]
        outs = evaluate(stage, [designs[k] for k in ranked], len(ranked), 0)
        for k, o in zip(ranked, outs):
            outputs[k][stage] = o
            lacks[k][stage] = tuple(_violation(o, cons))
        survivors = [k for k in ranked if not lacks[k][stage]]
        final_stage, final_objectives, previous = stage, (obs if stage == "coupled" else objectives), stage
        if not survivors:
            break

    at_final = [k for k in keys if final_stage in outputs[k]]
    feasible = [k for k in at_final if not lacks[k][final_stage]]
    pareto: list[str] = []
    if feasible:
        F = _objective_matrix([_merged(outputs[k]) for k in feasible], final_objectives)
        mask = pareto_mask(F)
        pareto = [feasible[i] for i in np.flatnonzero(mask)]
        pareto.sort(key=lambda k: _objective_matrix([_merged(outputs[k])], final_objectives)[0, 0])
    cons_final = {"hand": constraints, "bloch": settings.bloch_constraints,
                  "coupled": settings.coupled_constraints}[final_stage]
    nearest = _distinct(sorted(at_final, key=lambda k: (_violation_amount(outputs[k][final_stage], cons_final), k)),
                        designs, space, count=5)
    ids = {k: "D" + k[:8] for k in keys}
    records = tuple(DesignRecord(id=ids[k], design=dict(designs[k]), outputs=outputs[k], lacks=lacks[k])
                    for k in keys)
    return StudyResult(records=records, pareto=tuple(ids[k] for k in pareto),
                       nearest=tuple(ids[k] for k in nearest) if not pareto else (),
                       computed=tuple(computed), counts=counts, seconds=seconds, executor=executor.name,
                       final_stage=final_stage, objectives=tuple(final_objectives))


def _distinct(keys: Sequence[str], designs: Mapping[str, Mapping[str, Any]], space: DesignSpace, *, count: int,
              apart: float = 0.05) -> list[str]:
    """The first ``count`` of ``keys`` that lie at least ``apart`` from each other in the unit cube.

    The nearest designs are shown to say what the space lacks; five near-copies of one design would say it once.
    """
    chosen: list[str] = []
    points: list[np.ndarray] = []
    for k in keys:
        x = space.encode(designs[k])
        if all(np.max(np.abs(x - p)) >= apart for p in points):
            chosen.append(k)
            points.append(x)
        if len(chosen) == count:
            break
    return chosen


def _merged(stage_outputs: Mapping[str, Mapping[str, Any]]) -> dict[str, Any]:
    """One mapping of every stage's outputs (later stages override)."""
    out: dict[str, Any] = {}
    for s in STAGES:
        out.update(stage_outputs.get(s, {}))
    return out


def full_values(record: DesignRecord, context: StudyContext) -> dict[str, Any]:
    """Every design value of a record, the base project's where the space did not vary them."""
    return full_design(record.design, context)


def write_results(result: StudyResult, folder: str | Path, *, study_id: str) -> Path:
    """Write ``out/study-results.json`` in the study folder (atomically) and return its path."""
    from latticecalc.project.atomic import write_text_atomic

    path = Path(folder) / "out" / "study-results.json"
    path.parent.mkdir(parents=True, exist_ok=True)
    data = {"study": study_id, **result.as_json()}
    write_text_atomic(path, json.dumps(data, indent=1, default=float), input_name="study results")
    return path
