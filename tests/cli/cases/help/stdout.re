^  train 
^  check 
^  codes 
^  inspect 
^  replay 
Exit codes: 0 ok, 1 invalid input
