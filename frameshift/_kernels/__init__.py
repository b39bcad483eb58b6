"""Pure numpy kernels.

Nothing in this package imports xarray or pint. Inputs are bare float arrays
in SI units and radians; vectors carry their components on a trailing axis of
length 3; scalar inputs broadcast against each other, so a factor that depends
only on latitude is computed once per latitude when the caller passes a
latitude array shaped to broadcast.
"""
