"""The trusted base stays small and never imports the prover (DESIGN §2)."""
import ast

from prover.report import ROOT, TRUSTED, trusted_base_lines

BUDGET = 2500


def test_trusted_base_size(capsys):
    sizes = trusted_base_lines()  # blank and comment-only lines excluded; the report shows it too
    assert sizes and all(name.startswith(TRUSTED) for name in sizes)
    total = sum(sizes.values())
    with capsys.disabled():
        print(f"\ntrusted base: {total} code lines (budget {BUDGET})")
        for name, n in sizes.items():
            print(f"  {n:5d}  {name}")
    assert total <= BUDGET


def test_trusted_base_never_imports_the_prover():
    for d in TRUSTED:
        for p in (ROOT / d).glob("*.py"):
            for node in ast.walk(ast.parse(p.read_text())):
                names = []
                if isinstance(node, ast.Import):
                    names = [a.name for a in node.names]
                elif isinstance(node, ast.ImportFrom) and node.level == 0:
                    names = [node.module or ""]
                assert not any(n == "prover" or n.startswith("prover.") for n in names), p
