"""Imports every command module so that its commands register on the app.

One line per module, alphabetical.
"""

from . import ansatz  # noqa: F401
from . import dispersion  # noqa: F401
from . import fix_each  # noqa: F401
from . import highenergy  # noqa: F401
