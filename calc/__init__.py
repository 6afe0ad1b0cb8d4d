"""inkfilm's calculation core: anilox volume, ink film and ink quantities.

Pure Python on top of pint; nothing here knows about the web.
"""

from calc.errors import InputError
from calc.units import Q_, ureg

__all__ = ["InputError", "Q_", "ureg"]
