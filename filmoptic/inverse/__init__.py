"""From what was measured or wanted back to the coating: solving and fitting.

Modules
-------
readings
    The model of a transmittance reading: sources, detectors, band weights, references.
solve
    Conditions (targets, colours, readings) and the one unknown thickness that meets them.
choose
    Candidate materials compared for the same target.
rate
    Deposition rate and offset from timed calibration runs.
measured
    Measured spectra as files people export.
envelope
    The envelope method (Swanepoel 1983): thickness and index from transmittance fringes.
fit
    Least-squares fit of free thicknesses and optical constants to measured spectra.
"""

__all__: list = []
