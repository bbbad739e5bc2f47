-- A study's thermal settings. NULL means the program's default, which the pages name
-- as such: surface temperature 10 °C [assumed], crustal heat production 1.5 µW/m³
-- decaying over 10 km [memory].
ALTER TABLE studies ADD COLUMN surface_temperature_c REAL;
ALTER TABLE studies ADD COLUMN crust_heat_production_uw_m3 REAL;
ALTER TABLE studies ADD COLUMN crust_heat_production_decay_km REAL;
