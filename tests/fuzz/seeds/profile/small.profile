name = mine
description = "a test"
hazard_voltage = 42
cap.film.voltage = 0.6
