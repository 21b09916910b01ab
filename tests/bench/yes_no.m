function s = yes_no (t, yes, no)
  % yes when t holds, else no: the benchmarks' printed verdicts
  if (t)
    s = yes;
  else
    s = no;
  end
end
