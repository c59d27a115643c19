"""Calibration: a table's cloth and cushion and each player's strokes, fitted to logged shots.

One concept a module: ``params`` (what is fitted, priors and bounds), ``value`` (the
Calibration and its JSON), ``evidence`` (attempts as observations), ``model`` (the model's
outcomes of many logged shots at once), ``likelihood`` (observations against outcomes as
residuals), ``solver`` (the MAP problem and scipy's least squares), ``fit`` (the
calibrations a fit gives), ``report`` (the sentences), ``use`` (resolving a table for a
player from the store), ``check`` (the table check). scipy is imported only inside the fit.
"""
