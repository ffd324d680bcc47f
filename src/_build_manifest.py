"""setuptools ``build_py`` that writes the installation manifest into a built package.

``pyproject.toml`` names this class under ``[tool.setuptools.cmdclass]`` (setuptools looks
for the module in the package directory, ``src/``; it is not installed). After the
package files are copied into the build directory, the SHA-256 of each is written to
``lotwise/validation/manifest.json`` there, so a wheel (or ``pip install .``) carries
the hashes of exactly the files it installs; ``lotwise validate`` compares the
installed files with them (see ``src/lotwise/validation/installation.py`` and
DEVELOPERS.md, "Validation"). An editable install writes no manifest: it is checked
against its git commit instead. The hashing code is loaded from the package's own
source file, so there is one implementation.
"""

from __future__ import annotations

import importlib.util
import sys
from pathlib import Path

from setuptools.command.build_py import build_py as _build_py

_SOURCE = Path(__file__).resolve().parent / "lotwise" / "validation" / "installation.py"


def _installation():
    spec = importlib.util.spec_from_file_location("_lotwise_installation", _SOURCE)
    module = importlib.util.module_from_spec(spec)
    sys.modules[spec.name] = module  # dataclasses look their module up while being built
    spec.loader.exec_module(module)
    return module


class BuildPy(_build_py):
    """``build_py`` followed by the manifest of the built ``lotwise`` package."""

    def run(self):
        super().run()
        if getattr(self, "editable_mode", False):
            return
        inst = _installation()
        root = Path(self.build_lib) / "lotwise"
        inst.write_manifest(root, root / inst.MANIFEST_NAME)

    def get_outputs(self, include_bytecode=True):
        outputs = list(super().get_outputs(include_bytecode))
        if not getattr(self, "editable_mode", False):
            outputs.append(str(Path(self.build_lib) / "lotwise" / "validation" / "manifest.json"))
        return outputs
