"""The demo's fictional scenario: the only place in filmoptic where invented numbers live.

*Tarnwick Glass Studio* is an imaginary two-person workshop with a small DC sputter coater. This
week it has three jobs:

1. A semi-mirror for a display cabinet door: float glass 4 mm thick that passes 30 % of the light
   (luminous transmittance, D65). Which metal, and how thick?
2. Decorative titanium tags whose colour comes from a thin oxide grown on the metal, and a tinted
   oxide film on silicon offcuts: what colour goes with which thickness?
3. After a titanium run, a cheap lux-meter reading through the coated door glass, and two earlier
   timed calibration runs, must give the film's thickness and the time for the next run. A
   transmittance curve of an oxide test piece (synthetic, made by the demo itself with noise) is
   fitted for thickness and index.

None of these numbers are measurements; they exist to show the commands at work.
"""

SCENARIO_NAME = "Tarnwick Glass Studio (fictional)"

# Job 1: the cabinet semi-mirror.
MIRROR_SUBSTRATE = "glass 4mm"
MIRROR_TARGET_LUMINOUS_T = 0.30
MIRROR_CANDIDATES = ("Ti", "Cr", "Ni", "Al", "Ag")
MIRROR_EXAMPLE_STACK = "Cr 10nm / glass 4mm"      # invented: a first guess the studio tries
SPECTRA_WAVELENGTHS_NM = (380.0, 780.0, 2.0)       # invented: the studio's usual plot range

# Job 2: oxide colours.
OXIDE_ON_METAL_STACK = "TiO2 ? / Ti"
OXIDE_ON_METAL_RANGE_NM = (0.0, 250.0, 1.0)
OXIDE_ON_SILICON_STACK = "SiO2 ? / Si"
OXIDE_EXAMPLE_STACK = "TiO2 60nm / Ti"
VIEWING_ANGLES_DEG = (0.0, 20.0, 40.0, 60.0)

# Job 3: after the titanium run on the door glass.
LUX_COATED = 318.0          # lux behind the coated door glass, halogen desk lamp (illuminant A)
LUX_OPEN = 1045.0           # lux with nothing in the beam, same lamp and distance
LUX_UNCERTAINTY = 0.02      # 2 % of the ratio: the meter's stated repeatability
LUX_SOURCE = "A"
# (duration, thickness ± its standard uncertainty) of earlier runs; invented, like the ± (say, a
# stylus step measured a few times on each test piece).
CALIBRATION_RUNS = (("4min", "9.1nm+-0.3nm"), ("10min", "21.8nm+-0.4nm"))
QCM_TOOLING_FACTOR = None   # the studio has no crystal monitor

# Job 3b: synthetic transmittance of an oxide test piece (made by the demo, with noise).
FIT_TRUE_STACK = "cauchy(2.21,0.032,0) 310nm / glass 1mm"
FIT_MODEL_STACK = "cauchy(?,?,0) 150..500nm / glass 1mm"
FIT_NOISE_ABS = 0.004       # standard deviation of the added noise, as a fraction of T
FIT_SEED = 20261202
FIT_WAVELENGTHS_NM = (400.0, 1000.0, 2.0)

# Job 3 (continued): what was coated, and what the next run is for (added for the thickness demo).
LUX_STACK = "Ti ? / glass 4mm"      # the titanium film on the door glass whose thickness the lux reading gives
NEXT_RUN_MATERIAL = "Ti"            # the next run makes the cabinet semi-mirror in this metal

# Job 2 (continued): thicknesses charted for the silicon offcuts (added for the colour demo).
OXIDE_ON_SILICON_RANGE_NM = (0.0, 600.0, 2.0)

# Job 4 (added for the anodising demo): a run of anodised titanium bookmarks for a museum shop.
# The studio charts its phosphate bath from 10 to 110 V, checks the colour its bath gives at the
# voltage it usually runs for blue, and asks which voltages give the shop's logo colour. The
# bath's law is the studio's own calibration, written into its process notes (invented).
ANODIZE_METAL = "Ti"
ANODIZE_VOLTS = (10.0, 110.0, 5.0)       # the chart's voltages: start, stop, step
ANODIZE_NM_PER_VOLT = 2.1                 # invented: the studio's bath, from its own test pieces
ANODIZE_OFFSET_NM = 3.0                   # invented: air-formed oxide before anodising
ANODIZE_USUAL_VOLTS = 24.0                # invented: where the studio usually runs for blue
ANODIZE_LOGO_HEX = "#c45ab9"              # invented: the museum shop's magenta logo colour
ANODIZE_MAX_DELTA_E = 6.0                 # invented: the shop's tolerance for the logo colour

# --- Notation of the trade (quarter waves): the display case's antireflection coating ---------
# invented: the studio coats its display-case glass with one quarter wave of MgF2 at 550 nm,
# written as the trade does instead of in nm.
DISPLAY_AR_STACK = "{550nm} MgF2 1qw / glass 4mm"
