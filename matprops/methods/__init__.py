"""The families of quantities behind :class:`matprops.Silicon`, one module each.

Each module holds a mixin class whose methods convert inputs at the boundary,
compose quantities where needed, call the bound kernels and return pint
quantities. :class:`matprops.material.Silicon` combines them and supplies the
plumbing they share (``_model``, ``_evaluate``, ``_quantity``).
"""
