"""The trusted base stays small and never imports the prover (DESIGN §2)."""
import ast
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]
TRUSTED = ("checker", "certformat")
BUDGET = 2500


def code_lines(path: Path) -> int:
    """Lines that are neither blank nor comment-only (the before-stop hook's measure)."""
    return sum(1 for line in path.read_text().splitlines()
               if line.strip() and not line.strip().startswith("#"))


def test_trusted_base_size(capsys):
    sizes = {str(p.relative_to(ROOT)): code_lines(p)
             for d in TRUSTED for p in sorted((ROOT / d).glob("*.py"))}
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
