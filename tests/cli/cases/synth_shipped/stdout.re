^phase 1 spring-baseline: 20000 records at 0\.5/s for 11h6m40s, from 2031-03-20T05:00:00Z$
^phase 2 irrigation: 21600 records
^phase 3 probe-firmware-3: 21600 records
^phase 1 dry-season: 20000 records at 0\.05/s for 4d15h6m40s, from 2032-09-01T00:00:00Z$
^phase 2 wet-season: 15000 records
^phase 3 logger-firmware: 15000 records
^phase 1 day-shift: 20000 records at 6/s for 55m33\.333s, from 2031-07-07T04:00:00Z$
^phase 2 grain-block: 21600 records
^phase 3 gateway-2: 21600 records
