^sent 10 records, [0-9]+ bytes to udp://127\.0\.0\.1:[0-9]+ in [0-9.]+ s
^received what stdout shows$
