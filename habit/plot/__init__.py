"""Figures. The only package in habit that imports matplotlib.

One module per topic; each imports matplotlib inside its functions, so importing this
package costs nothing. Every ``plot_*`` function takes ``ax=None``, forwards ``**kwargs``
to matplotlib, returns the artists it made and never calls ``show()``.
"""
