"""Safety cautions shown by the README, the report and every ``--help``."""

CAUTIONS = (
    "Mains-powered detectors and two-wire switches carry hazardous voltage: design, "
    "installation and testing must follow local electrical codes and licensed practice. "
    "Modelled ranges and false-trigger rates are estimates, not a certification: intrusion "
    "detectors must be tested to the applicable standard by an accredited laboratory."
)
