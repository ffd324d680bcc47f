"""The package version, in one place every layer may read.

``lotwise.__version__`` is this value; documents (plan sheets) print it
without importing the package's top level.
"""

__version__ = "0.1.0"
