package simulate

// PlanHelp documents every key of a plan file, for `vcz simulate --help`.
const PlanHelp = `An observing plan is a TOML file. Angles are in degrees, lengths in metres,
wavelengths in micrometres, hour angles in hours. Unknown keys are errors.

Top level
  array = "NAME"          ARRNAME of the simulated array (default "SIMULATED")
  instrument = "NAME"     INSNAME of the simulated instrument (default "SIMULATED")
  seed = 42               seed of the noise generator, >= 0 (default 0); the same
                          plan, model and seed always give the same data
  write = ["vis2", "t3"]  data tables to write: any of "vis2" (OI_VIS2),
                          "t3" (OI_T3: closure phases and triple amplitudes),
                          "vis" (OI_VIS: complex visibilities, absolute phases),
                          "visdiff" (OI_VIS: differential amplitudes and phases,
                          each row's mean amplitude divided out and its phases'
                          mean and slope in 1/wavelength removed);
                          default ["vis2", "t3"]

[site]
  name = "NAME"           site name (informational)
  latitude = -24.6        geodetic latitude, north positive (required)
  longitude = 70.4        longitude, east positive (default 0); sets OI_ARRAY
                          ARRAYX/Y/Z and the observing times
  altitude = 2600         height above the WGS 84 ellipsoid in m (default 0)
  elevation_limit = 30    lowest usable elevation (default 0); hour angles with
                          the target lower are skipped and counted

[[station]]               one table per station, in OI_ARRAY order (STA_INDEX 1, 2, ...)
  name = "N1"             station name, unique (STA_NAME; required)
  telescope = "T1"        telescope name (TEL_NAME; default: the station name)
  east = 12.5             position east of the array reference point (required)
  north = -40.0           position north of it (required)
  up = 0.3                position above it (default 0)
  diameter = 1.8          telescope diameter (default 0 = unknown)

[target]
  name = "NAME"           target name (default "TARGET")
  ra = 201.5              right ascension J2000 (required)
  dec = -35.2             declination J2000 (required)

[observation]
  combine = ["N1", "S3"]  stations combined (default: all); every pair is a
                          baseline and every three form a closing triangle
  mjd = 61050             the UT day on which the observations start (required)
  hour_angles = [-2, 0, 1.5]                 hour angles in observing order, or
  hour_angle_start = -3, hour_angle_end = 3, hour_angle_step = 0.75
                          a regular series from start to end inclusive
  integration_time = 60   INT_TIME of each record in s (default 60)

[wavelengths]             either a list of channels:
  centre = [1.55, 1.65]   channel centres
  width = [0.05]          channel widths: one value for all or one per channel
                          or a regular series:
  from = 1.5, to = 1.8, channels = 8
                          centres from..to inclusive; width defaults to the spacing
  smearing = true         each channel's visibility is the average over its band
                          (a top-hat of the width), as an instrument measures it
                          (default); false: the value at the channel's centre.
                          Chromatic models likewise: their coherent flux over
                          the band, with each component's spectrum and the
                          line, divided by their flux over it

[noise]                   errors are written to the *ERR columns; amplitude
                          errors are sqrt((relative*value)^2 + floor^2); phase
                          errors are sqrt(phase^2 + (amp_floor/amp in deg)^2), at
                          most 180, so phases are poorly known near |V| = 0
  add = true              add Gaussian noise with these errors (default true);
                          false writes exact values with the same errors
  vis2_relative = 0.05    relative error of VIS2DATA (default 0.05)
  vis2_floor = 0.002      absolute floor of VIS2ERR, > 0 (default 0.002)
  t3phi_floor = 1.0       floor of T3PHIERR in degrees, > 0 (default 1)
  t3amp_relative = 0.05   relative error of T3AMP (default 0.05)
  t3amp_floor = 0.002     absolute floor of T3AMPERR, > 0 (default 0.002)
  visamp_relative = 0.03  relative error of VISAMP (default 0.03)
  visamp_floor = 0.002    absolute floor of VISAMPERR, > 0 (default 0.002)
  visphi_floor = 1.0      floor of VISPHIERR in degrees, > 0 (default 1)
`
