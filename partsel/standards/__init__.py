"""Tables from published standards, each module naming its source.

eseries (IEC 60063), iec60062 (tolerance letters, RKM and EIA capacitance codes), eia198
(ceramic dielectric codes), safety (IEC 60384-14 classes), aecq200 (AEC-Q200 Rev E grades).
"""

from partsel.standards import aecq200, eia198, eseries, iec60062, safety

__all__ = ["aecq200", "eia198", "eseries", "iec60062", "safety"]
