entropy 2\.121928 bits/symbol$
^kraft_sum +1 \(complete\)$
^5\.symbol: "escape"$
