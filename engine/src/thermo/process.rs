//! Device models: isentropic, compressor, turbine, pump, nozzle, throttle. (to be written)
