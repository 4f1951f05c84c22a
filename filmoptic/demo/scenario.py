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

# Job 5 (added for the monitor demo): watching the cabinet semi-mirror grow. The studio has no
# crystal monitor; a green LED and a bare photodiode behind a diffuser (a flat detector) look
# through the door glass, a second photodiode watches the LED alone, and a small logger writes
# both every 0.2 s. The run is synthetic: the demo makes it from the forward model with the
# imperfections below, all invented.
MONITOR_STACK = LUX_STACK                      # "Ti ? / glass 4mm"
MONITOR_SOURCE = "led:530/30"
MONITOR_DETECTOR = "flat"
MONITOR_TARGET_LUMINOUS_T = MIRROR_TARGET_LUMINOUS_T
MONITOR_RATE_NM_PER_S = 0.075      # the studio's titanium rate at its usual power (4.5 nm/min)
MONITOR_SHUTTER_OPENS_S = 12.0     # the shutter stays shut for the first 12 s (the baseline is 5 s)
MONITOR_INTERVAL_S = 0.2           # the logger's sampling interval
MONITOR_LENGTH_S = 170.0           # how long the recorded run goes on
MONITOR_COUNTS = 41250.0           # raw counts through the uncoated door glass
MONITOR_REFERENCE_COUNTS = 20480.0 # raw counts of the photodiode that watches the LED alone
MONITOR_DARK_COUNTS = 310.0        # counts with the LED off
MONITOR_NOISE = 0.002              # relative noise of each reading (standard deviation)
MONITOR_DRIFT_PER_MIN = -0.004     # the LED dims by 0.4 % a minute as it warms
MONITOR_OUTLIER_AT_S = 61.0        # one spark: a reading 25 % too high
MONITOR_OUTLIER_FACTOR = 1.25
MONITOR_DROPOUT_S = (84.0, 84.6)   # a loose connector: dark readings for 0.6 s
MONITOR_SEED = 20261203

# Job 6 (thickness map from a photo): the door glass of job 3 photographed on the studio's light
# box to see how even the titanium came out. The photo is synthetic, made by the demo itself from
# this invented thickness field: a small source's fall-off t0/(1 + r²/h²)² about a centre off the
# glass's middle, a slight tilt, and a strip along the left edge left bare under a clamp.
MAP_STACK = "Ti ? / glass 4mm"
MAP_LIGHT_BOX = "LED-B3"                  # the light box's spectrum (a CIE white-LED illuminant)
MAP_PHOTO_PX = (960, 720)                 # width, height of the (synthetic) photo
MAP_SCALE_PX_PER_MM = 3.0                 # from a ruler on the light box
MAP_GLASS_MM = (10.0, 10.0, 310.0, 230.0) # the glass on the photo: x0, y0, x1, y1 in mm
MAP_BARE_STRIP_MM = 25.0                  # width of the bare strip under the clamp, at the glass's left edge
MAP_PEAK_NM = 10.6                        # thickest point of the film
MAP_SOURCE_AT_MM = (185.0, 110.0)         # where the film is thickest (x, y on the photo)
MAP_SOURCE_DISTANCE_MM = 420.0            # h of the fall-off
MAP_TILT_NM_PER_MM = (0.002, -0.001)      # extra thickness per mm along x and y
MAP_EXPOSURE = 0.82                       # the open light box's level on the lens axis (linear)
MAP_VIGNETTING_CORNER = 0.72              # the lens passes this fraction in the photo's corners
MAP_NOISE = (0.01, 0.002)                 # camera noise: shot and read (linear units)
MAP_JPEG_QUALITY = 90
MAP_SEED = 20261203
MAP_CELL_MM = 10.0                        # map cells, mm

# Job 7 (added for the design demo): the cabinet semi-mirror again, now protected by a silica
# overcoat and with a neutral (grey) reflected tint, designed from a stack with free thicknesses,
# and its yield when the studio's coater holds each layer to ±3 %.
DESIGN_STACK = "SiO2 20..200nm / Cr ? / TiO2 ? / glass 4mm"   # overcoat / absorber / titania / door glass
DESIGN_GOALS = ("luminous-T = 30%", "reflected Lab = 62,0,0 within 2")
DESIGN_SEED = 20261203
DESIGN_TOLERANCE = "3%"            # each layer within ±3 % of its thickness, spread evenly
DESIGN_SAMPLES = 2000
# --- Notation of the trade (quarter waves): the display case's antireflection coating ---------
# invented: the studio coats its display-case glass with one quarter wave of MgF2 at 550 nm,
# written as the trade does instead of in nm.
DISPLAY_AR_STACK = "{550nm} MgF2 1qw / glass 4mm"

# Job 8 (added for the explore page): the titanium tags of job 2 again, now as a page the studio
# can send to the museum shop by e-mail, so that the buyer can slide the oxide thickness and the
# viewing angle and see the colours before ordering. Invented: the range the studio offers and the
# angles the buyer may tilt a tag to.
EXPLORE_STACK = "TiO2 10..200nm / Ti"      # the oxide thicknesses the studio offers on its tags
EXPLORE_ANGLES_DEG = (0.0, 75.0, 5.0)     # start, stop, step of the page's angle slider
EXPLORE_SHOWN_NM = 50.0                   # the thickness the studio quotes for its blue
