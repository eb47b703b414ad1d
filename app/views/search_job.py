"""The design-search view's background job and the reading of its fields, without Qt."""

from __future__ import annotations

import dataclasses
import threading
from collections.abc import Callable, Iterator
from concurrent.futures import Executor
from typing import Any

from rungwise.core import Design
from rungwise.core.cost import CostTable
from rungwise.core.search_question import SearchQuestion
from rungwise.core.space_search import SearchResult, iter_search
from rungwise.core.targets import Targets


def question_from_fields(fields: dict[str, str], criterion: str, target_yield: float, trials: int,
                         seed: int) -> SearchQuestion:
    """A question from the view's text fields (empty = the default); a bad entry raises
    ``DesignError`` naming the field (``search.<key>``)."""
    texts: dict[str, Any] = {k: v.strip() for k, v in fields.items()}
    if texts.get("networks"):
        texts["topologies"] = texts["networks"]
    texts.pop("networks", None)
    texts.update(criterion=criterion, target_yield=target_yield, trials=trials, seed=seed)
    return SearchQuestion().updated(texts)


def search_job(base: Design, question: SearchQuestion, targets: Targets, cost: CostTable,
               make_executor: Callable[[], Executor | None]) -> Any:
    """A ``JobRunner`` job: ``job(cancel)`` yielding ``Progress`` with a copy of the partial
    result after every finished point, then the final ``SearchResult``."""
    from ..jobs.workers import Progress

    def job(cancel: threading.Event) -> Iterator[Any]:
        executor = make_executor()
        last: SearchResult | None = None
        try:
            for step in iter_search(base, question, targets, cost, executor, cancel):
                last = dataclasses.replace(step.result, points=list(step.result.points))
                yield Progress(last.done, max(last.total, 1), last)
        finally:
            if executor is not None:
                executor.shutdown(wait=False, cancel_futures=True)
        yield last

    return job
