"""The render pipeline's named steps, one module each: load -> resolve -> compute -> draw ->
save. :mod:`figspec.pipeline` chains them."""
