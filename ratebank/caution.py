"""The caution every export, summary and review page carries (DESIGN section 9).

Kept in a module of its own at the bottom of the stack, so that any layer can
show it without importing the services.
"""

from __future__ import annotations

CAUTION = (
    "Estimated rate parameters are order-of-magnitude guidance and fitted ones hold only "
    "over their measured range. Where this mechanism feeds safety decisions (ignition, "
    "explosion limits, emissions permits), its numbers must be validated against "
    "measurements; local codes and licensed practice decide."
)
