"""The built-in demo design as a design file.

Scenario (invented for the demo): *Marrowby Parish Reading Room* wants its lights to follow
occupancy. The fictional "Tern-2" wall sensor is mounted 2.2 m high on the short wall of the
room, looking along its length; readers walk between the shelves at about 1 m/s. It runs from
a 3.3 V rail that a small mains supply provides (budget 150 µA). Every number is a plausible
demo value, not data about any real product.
"""

DEMO_TOML = """\
# pirchain design file: the built-in demo (an invented product in an invented room).
# Values take SI prefixes and IEC 60062 codes ("47k", "4k7", "2u2", "75G"); temperatures in °C.

[design]
name = "Tern-2 reading-room wall sensor (demo)"

[lens]
layout = "wall"          # "wall" (tiers), "ceiling" (rings) or "table" (explicit facets)
fov_deg = 110
name = "Tern-2 four-tier wall lens"
tiers = [
  { elevation_deg = -5.0,  count = 9, focal_length = "22mm", area = "30u" },
  { elevation_deg = -13.0, count = 7, focal_length = "18mm", area = "22u" },
  { elevation_deg = -27.0, count = 5, focal_length = "13mm", area = "15u" },
  { elevation_deg = -52.0, count = 3, focal_length = "9mm",  area = "10u" },
]

[mount]
kind = "wall"
height = "2.2m"
tilt_deg = 0

[sensor]
route = "material"       # or "datasheet"
material = "LiTaO3"
layout = "dual"
element_width = "1mm"
element_height = "2mm"
element_spacing = "2mm"
thickness = "25u"
absorptance = 0.8
thermal_time_constant = "350m"
gate_resistance = "60G"
gate_resistance_tempco = "-300u"   # per kelvin (-300 ppm/K); the material sets p(T), eps(T)
input_capacitance = "3p"
mismatch = 0.05

[follower]
idss = "400u"
pinch_off = 1.2
source_resistance = "47k"
# noise from the operating point (e_n, i_n unset); flicker as a datasheet corner
gate_leakage = "0.5p"    # at 25 °C; doubles every 10 K
e_n_corner = 200

[opamp]                  # default op-amp of every stage
gbw = "100k"
v_low = 0.02
v_high = 3.28
quiescent_current = "7u"
e_n = "50n"              # white density; e_n_at = <Hz> if read off the curve elsewhere
e_n_corner = 20
i_n = "1f"
i_n_corner = 10
offset = "1m"            # at 25 °C
offset_drift = "3u"      # V/K

[[stages]]
type = "non_inverting_band_pass"
name = "stage 1 (non-inverting)"
r1 = "10k"
c1 = "22u"
rf = "560k"
cf = "27n"
v_ref = 0
c1_leakage = "200M"      # electrolytic C1: 5 nA at 1 V
r_tempco = "100u"        # per kelvin

[[stages]]
type = "inverting_band_pass"
name = "stage 2 (inverting)"
r1 = "22k"
c1 = "10u"
rf = "1M"
cf = "15n"
v_ref = "reference"      # the supply's reference divider
c1_leakage = "200M"
r_tempco = "100u"

[comparator]
window = "ladder"        # "ladder", "fixed" or "mapped"
r_top = "1M"
r_middle = "470k"        # the sensitivity resistor
r_bottom = "1M"
hysteresis = "20m"

[logic]
rate = 50
pulses_required = 2
count_window = 4
blanking = "300m"
hold = 60
retrigger = true
lockout = 2

[logic.daylight]
r_fixed = "100k"
r_ldr_10lux = "1M"
gamma = 0.7
v_on = 1.65
hysteresis = 0.2

[supply]
voltage = 3.3
reference_top = "1M"
reference_bottom = "1M"
logic_current = "5u"
limit = "150u"

[scene]
target = "adult"
speed = 1.0
air_c = 21.0
relative_humidity = 50   # [%]: how well a warm person's sweat cools the skin
# detector_c = 21.0      # the parts' own temperature (default: the air's)

[draught]
rms = 0.01
correlation_time = 5
beam_correlation = 0.7
fov_fraction = 0.2

[analysis]
sample_rate = 100
level = 0.9
trials = 36               # walks per distance: 36 confirm P(detect) >= 0.9 at 95 % confidence
d_max = 30
step = 1.5
bearings = [-50, -30, -15, 0, 15, 30, 50]
seed = 1
walk_distance = 8
sensitivity_path = "detector.comparator.window.r_middle"
sensitivity_values = ["62k", "91k", "150k", "270k", "470k", "820k"]
false_trigger_budget = 1.0
coverage_cell = 1.0
coverage_x_max = 16
coverage_trials = 2
walk_direction = "both"   # tangential walks both ways in turn; "ccw" / "cw": one way only
"""
