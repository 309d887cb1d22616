"""scikit-learn-style estimators: energy stage, two-stage, hybrid, direct baseline, and the
applicability domain. Parameters are set in ``__init__``; learned state ends in ``_``."""
