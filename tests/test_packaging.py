"""The installed packages: every package folder of the source is listed in pyproject.toml.

setuptools installs only the packages named in ``[tool.setuptools] packages``; a package folder
left out still imports from a source checkout (editable install) but is missing from a wheel
(common practice: setuptools documentation, "Package Discovery").
"""

import tomllib
from pathlib import Path

ROOT = Path(__file__).resolve().parents[1]


def test_every_package_folder_is_installed():
    config = tomllib.loads((ROOT / "pyproject.toml").read_text(encoding="utf-8"))["tool"]
    listed = set(config["setuptools"]["packages"])
    mapped = {name: ROOT / folder for name, folder in config["setuptools"]["package-dir"].items()}
    found = {".".join(init.parent.relative_to(ROOT).parts)
             for init in (ROOT / "solver").rglob("__init__.py")}
    found |= {name for name, folder in mapped.items() if (folder / "__init__.py").is_file()}
    assert found - listed == set(), "package folders missing from pyproject.toml"
    assert listed - found == set(), "pyproject.toml lists packages that do not exist"
