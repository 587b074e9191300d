"""The README's Python example runs as written (its code blocks stay runnable)."""

import re
from pathlib import Path

README = Path(__file__).resolve().parents[1] / "README.md"


def test_readme_python_block_runs(monkeypatch, capsys):
    blocks = re.findall(r"```python\n(.*?)```", README.read_text(), flags=re.S)
    assert blocks, "the README shows a Python example"
    monkeypatch.chdir(README.parent)
    # The loop runs the demo twice; on a coarse mesh on purpose (no grading toward the
    # draining boundaries, which tests/test_grading.py checks) to keep the suite fast.
    import solver.model
    load = solver.model.load_model

    def coarse_load(path):
        model = load(path)
        model.section.grading.enabled = False
        return model

    monkeypatch.setattr(solver.model, "load_model", coarse_load)
    for code in blocks:
        exec(compile(code, "README.md", "exec"), {})
    out = capsys.readouterr().out
    lines = [ln for ln in out.splitlines() if ln.startswith("E = ")]
    assert len(lines) == 2
    s = [float(re.search(r"settlement ([\d.]+) m", ln).group(1)) for ln in lines]
    assert s[0] > s[1] > 0          # the stiffer clay settles less
