"""Figure keys: the one name of each kind of computed figure, shared by compute, check, output and site.

A key is `<group>.<quantity>_<unit>`; the group says what the figure is of (an element's length, the band,
the modelled VSWR, a measurement, a sweep, the feeder, the ground plane, the pattern, a pair, a cable).
Use these names, never the text: a misspelt constant fails at import, a misspelt string silently finds nothing.
"""

BAND_COVERED_PCT = "band.covered_pct"
BAND_RATED_MHZ = "band.rated_mhz"
BAND_SERVICE_MHZ = "band.service_mhz"
BAND_UNCOVERED_MHZ = "band.uncovered_mhz"

CABLE_A = "cable.a"
CABLE_B = "cable.b"
CABLE_MAX_RESIDUAL = "cable.max_residual"
CABLE_RMS_RESIDUAL = "cable.rms_residual"

FEEDER_ADAPTER_LOSS_DB = "feeder.adapter_loss_db"
FEEDER_CABLE_LOSS_DB = "feeder.cable_loss_db"
FEEDER_CONNECTOR_LOSS_DB = "feeder.connector_loss_db"
FEEDER_DELIVERED_PCT = "feeder.delivered_pct"
FEEDER_FREQ_MHZ = "feeder.freq_mhz"
FEEDER_MISMATCH_LOSS_DB = "feeder.mismatch_loss_db"
FEEDER_RETURN_LOSS_DB = "feeder.return_loss_db"
FEEDER_TOTAL_LOSS_DB = "feeder.total_loss_db"

GROUND_MATERIAL = "ground.material"
GROUND_RADIUS_M = "ground.radius_m"
GROUND_REQUIRED_M = "ground.required_m"
GROUND_TYPE = "ground.type"

LENGTH_DESIGN_FREQ_MHZ = "length.design_freq_mhz"
LENGTH_DEVIATION_MM = "length.deviation_mm"
LENGTH_DEVIATION_PCT = "length.deviation_pct"
LENGTH_INSTALLED_M = "length.installed_m"
LENGTH_RESONANT_M = "length.resonant_m"
LENGTH_WAVELENGTH_M = "length.wavelength_m"

MEASURED_AGE_DAYS = "measured.age_days"
MEASURED_DATE = "measured.date"
MEASURED_VSWR = "measured.vswr"

PAIR_DISTANCE_M = "pair.distance_m"
PAIR_FAR_FIELD_M = "pair.far_field_m"
PAIR_FREQ_MHZ = "pair.freq_mhz"
PAIR_GAIN_A_DBI = "pair.gain_a_dbi"
PAIR_GAIN_B_DBI = "pair.gain_b_dbi"
PAIR_ISOLATION_DB = "pair.isolation_db"
PAIR_MIN_ISOLATION_DB = "pair.min_isolation_db"
PAIR_PATH_LOSS_DB = "pair.path_loss_db"

PATTERN_AZIMUTH_RIPPLE_DB = "pattern.azimuth_ripple_db"
PATTERN_DIRECTIVITY_DBI = "pattern.directivity_dbi"
PATTERN_FIRST_SIDELOBE_DB = "pattern.first_sidelobe_db"
PATTERN_FRONT_TO_BACK_DB = "pattern.front_to_back_db"
PATTERN_HPBW_E_DEG = "pattern.hpbw_e_deg"
PATTERN_HPBW_H_DEG = "pattern.hpbw_h_deg"

SWEEP_ERROR = "sweep.error"
SWEEP_FAULT_DISTANCE_M = "sweep.fault_distance_m"
SWEEP_MAX_VSWR = "sweep.max_vswr"
SWEEP_MIN_RETURN_LOSS_DB = "sweep.min_return_loss_db"

VSWR_BAND_UNDER_LIMIT_MHZ = "vswr.band_under_limit_mhz"
VSWR_BODE_FANO_PCT = "vswr.bode_fano_pct"
VSWR_MAX_IN_BAND = "vswr.max_in_band"
VSWR_NEEDED_PCT = "vswr.needed_pct"
VSWR_Q = "vswr.q"
VSWR_R_DESIGN_OHM = "vswr.r_design_ohm"
VSWR_RESONANCE_MHZ = "vswr.resonance_mhz"

SKIN_DISTANCE_M = "skin.distance_m"
SKIN_PART = "skin.part"
SKIN_SHAPE = "skin.shape"
SKIN_TOLERANCE_M = "skin.tolerance_m"

COVERAGE_ATTITUDE = "coverage.attitude"
COVERAGE_LEVEL_PCT = "coverage.level_pct"
COVERAGE_REGION = "coverage.region"
COVERAGE_REQUIRED_PCT = "coverage.required_pct"
COVERAGE_SECTOR = "coverage.sector"
COVERAGE_WORST_PCT = "coverage.worst_pct"

GROUND_HORIZON_DBI = "ground.horizon_dbi"
GROUND_HORIZON_LOST_DB = "ground.horizon_lost_db"
GROUND_PEAK_ELEVATION_DEG = "ground.peak_elevation_deg"
GROUND_RADIUS_WAVELENGTHS = "ground.radius_wavelengths"
GROUND_Z_PLATE_OHM = "ground.z_plate_ohm"
GROUND_Z_REFERENCE_OHM = "ground.z_reference_ohm"
GROUND_SHIFT_VSWR = "ground.shift_vswr"

PAIR_COUPLING_DB = "pair.coupling_db"
PAIR_MODEL = "pair.model"
