"""The model: a plan, a scenario and its levels in, daily series out (compiled SEIR kernels)."""
