^Usage: .*synth \[OPTIONS\] scenario
--seed
--speed
--to
--phase
--records
--list
Exit codes: 0 ok, 1 invalid scenario file
