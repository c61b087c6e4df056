"""The propositional search against brute-force enumeration (truth tables: common practice).

Random clause sets with a toy theory that forbids atoms 1 and 2 together; the answer must
match enumeration, a model must satisfy every clause, and every trimmed refutation must replay
with the checker's own RUP rule from the core's clauses and the lemmas alone.
"""
import itertools

from hypothesis import given, settings, strategies as st

from checker.refutation import unit_propagation_conflicts
from prover.search import TheoryAnswer, search


def satisfiable(clauses, n):
    for bits in itertools.product((1, -1), repeat=n):
        if all(any(bits[abs(l) - 1] * (1 if l > 0 else -1) > 0 for l in c) for c in clauses):
            return True
    return False


@st.composite
def clause_sets(draw):
    n = draw(st.integers(1, 7))
    lit = st.integers(1, n).flatmap(lambda v: st.sampled_from((v, -v)))
    return n, draw(st.lists(st.lists(lit, min_size=0 if n == 1 else 1, max_size=3)
                            .map(tuple), min_size=1, max_size=30))


@settings(max_examples=1500, deadline=None)
@given(clause_sets())
def test_search_agrees_with_truth_tables(case):
    n, clauses = case

    def theory(lits):
        if n >= 2 and 1 in lits and 2 in lits:
            return TheoryAnswer("conflict", (1, 2))
        return TheoryAnswer("sat", model=lits)

    expected = satisfiable(clauses + ([(-1, -2)] if n >= 2 else []), n)
    r = search(clauses, list(range(1, len(clauses) + 1)), n, n, theory)
    assert (r.answer == "sat") == expected
    if r.answer == "sat":
        assert all(any(l in set(r.model) for l in c) for c in clauses)
        return
    db = [clauses[i - 1] for i in r.core] + [tuple(-l for l in lits) for lits, _ in r.lemmas]
    for step in r.steps:
        assert unit_propagation_conflicts(db, {-l for l in step})
        db.append(step)
    assert r.steps[-1] == ()


def test_stop_request_gives_unknown():
    r = search([(1, 2)], [1], 2, 2, lambda lits: TheoryAnswer("sat"), lambda: "time limit")
    assert r.answer == "unknown" and r.reason == "time limit"
