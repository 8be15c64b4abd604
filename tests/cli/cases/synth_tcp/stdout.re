^sent 40 records, [0-9]+ bytes to tcp://127\.0\.0\.1:[0-9]+ in [0-9.]+ s \([0-9hms.]+ simulated\)$
^received what stdout shows$
