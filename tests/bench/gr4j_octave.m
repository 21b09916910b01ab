function X = gr4j_octave (X, Pm, days, Pd, Ed, x4max)
  % The daily map on the whole ensemble: stores S, R as rows, the two
  % queues as matrices with as many slots as the ensemble's longest unit
  % hydrographs need (the other slots of the 20 + 40 stay 0, so they are
  % not carried), the ordinates computed once for the run's parameters.
  % x4max (default: the largest X4 of Pm) is the largest X4 any member
  % can have, when the caller's members change their parameters.
  nh1 = 20;
  nh2 = 40;
  x1 = Pm(1, :); x2 = Pm(2, :); x3 = Pm(3, :); x4 = Pm(4, :);
  N = columns (X);
  if (nargin < 6)
    x4max = max (x4);
  end
  m1 = min (nh1, ceil (x4max));
  m2 = min (nh2, ceil (2 * x4max));
  if (any (any (X(2 + m1 + 1:2 + nh1, :))) || any (any (X(2 + nh1 + m2 + 1:2 + nh1 + nh2, :))))
    error ('the Octave version carries only the queue slots the ensemble uses');
  end
  [o1, o2] = gr4j_ordinates (x4, m1, m2, nh1, nh2);
  S = X(1, :);
  R = X(2, :);
  U1 = X(3:2 + m1, :);
  U2 = X(3 + nh1:2 + nh1 + m2, :);
  Q = X(end, :);
  z1 = zeros (1, N);
  for k = 1:days
    d = Pd(k) - Ed(k);             % forcing shared by all members
    pn = max (d, 0);
    en = max (-d, 0);
    % production store: only one of Ps, Es is non-zero on a day
    sr = S ./ x1;
    if (pn > 0)
      tp = tanh (pn ./ x1);
      ps = x1 .* (1 - sr .* sr) .* tp ./ (1 + sr .* tp);
      S = S + ps;
    else
      ps = 0;
      if (en > 0)
        tv = tanh (en ./ x1);
        S = S - S .* (2 - sr) .* tv ./ (1 + (1 - sr) .* tv);
      end
    end
    q = (4 / 9) * (S ./ x1);
    q2 = q .* q;
    perc = S .* (1 - 1 ./ sqrt (sqrt (1 + q2 .* q2)));
    S = S - perc;
    pr = perc + pn - ps;
    % unit hydrographs
    U1 = [U1(2:end, :); z1] + o1 .* (0.9 * pr);
    U2 = [U2(2:end, :); z1] + o2 .* (0.1 * pr);
    % exchange from R before the inflow, routing store
    rr = R ./ x3;
    f = x2 .* (rr .* rr .* rr .* sqrt (rr));
    R = R + U1(1, :) + f;
    R(R < 0) = 0;
    rr = R ./ x3;
    rr2 = rr .* rr;
    qr = R .* (1 - 1 ./ sqrt (sqrt (1 + rr2 .* rr2)));
    R = R - qr;
    qd = U2(1, :) + f;
    qd(qd < 0) = 0;
    Q = qr + qd;
  end
  X(1, :) = S;
  X(2, :) = R;
  X(3:2 + m1, :) = U1;
  X(3 + nh1:2 + nh1 + m2, :) = U2;
  X(end, :) = Q;
end

function [o1, o2] = gr4j_ordinates (x4, m1, m2, nh1, nh2)
  % UH ordinates: differences of the S-curves at whole days,
  % SH1(t) = (t/X4)^2.5 for t < X4, else 1;
  % SH2(t) = (t/X4)^2.5 / 2 for t <= X4, 1 - (2 - t/X4)^2.5 / 2 for
  % X4 < t < 2 X4, else 1 (the last slot of each queue takes what is left)
  N = numel (x4);
  c = 1 ./ (x4 .* x4 .* sqrt (x4));
  t = (1:m1)';
  sh1 = min ((t .^ 2.5) .* c, 1);
  sh1(t >= x4 | t == nh1) = 1;
  o1 = diff ([zeros(1, N); sh1]);
  t = (1:m2)';
  sh2 = 0.5 * min ((t .^ 2.5) .* c, 1);
  u = max (2 - t ./ x4, 0);
  mid = t > x4;
  v = 1 - 0.5 * (u .* u .* sqrt (u));
  sh2(mid) = v(mid);
  sh2(t >= 2 * x4 | t == nh2) = 1;
  o2 = diff ([zeros(1, N); sh2]);
end
