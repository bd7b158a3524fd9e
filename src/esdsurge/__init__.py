"""esdsurge: surge checks of emergency shutdowns on fuel and chemical transfer lines.

Results are an engineering check that depends on the input data; they do not replace a surge
study signed by a competent engineer, the applicable codes and the carrier's own data.
"""

from importlib.metadata import PackageNotFoundError, version

try:
    __version__ = version("esdsurge")
except PackageNotFoundError:  # running from a source tree without installation
    __version__ = "0.0.0"

__all__ = ["__version__"]
