function bench_exchange ()
  % The particle exchange a distributed particle filter would need after
  % a global systematic resampling, for P ranks up to 1000 holding
  % balanced blocks of members (rank r: members floor(r N / P) ..
  % floor((r + 1) N / P) - 1, and the same block of the new ensemble).
  % The resampling is the kernel's (sluice.kernel.resample, systematic);
  % the exchange is counted, not run: copies = new members whose ancestor
  % lives on another rank; sends = distinct (ancestor, receiving rank)
  % pairs (a state sent once with its count of copies); partners = the
  % most ranks one rank sends to; model = the estimate below (capped at N).
  %
  % The model on paper: member i's first copy lands at position
  % D_i + i, where D_i = sum_{j<i} (N w_j - 1) (plus the uniform offset).
  % With weights independent of the member index the increments have mean
  % 0 and variance v = N sum w^2 - 1 = N / ESS - 1, so D is a Brownian
  % bridge of variance v b (N - b) / N at b. A rank boundary b is crossed
  % by about |D_b| copies; E|D_b| = sqrt (2 v b (N - b) / (pi N)), and
  % averaged over the P - 1 boundaries (int_0^1 sqrt (x (1 - x)) dx = pi/8)
  %   copies ~ sqrt (pi / 32) (P - 1) sqrt (v N),
  % about 0.31 sqrt (v N) per rank whatever P: the share of the ensemble
  % that moves grows as P / sqrt (N), and while sqrt (v N) is below the
  % block size N / P, a rank talks to its two neighbours only.
  seed = 20261203;
  ndraw = 5;          % weight draws averaged (one draw is one bridge path)
  Ps = [2 4 16 64 256 1000];
  for N = [1e5 1e6]
    for ratio = [0.9 0.5 0.1]
      % log-normal weights: ESS / N = exp (-s^2) for log-weights N(0, s^2)
      % (common practice; the realised ESS is measured below)
      s = sqrt (-log (ratio));
      m = zeros (numel (Ps), 3);
      vs = 0;
      for d = 1:ndraw
        randn ('state', d);
        w = exp (s * randn (1, N));
        ess = sum (w) ^ 2 / sum (w .^ 2);
        vs = vs + (N / ess - 1) / ndraw;
        anc = double (sluice.kernel.resample (w, 'systematic', N, seed, d));
        if (min (anc) >= 1)
          anc = anc - 1;   % 0-based ancestors
        end
        k = 0:N-1;
        for j = 1:numel (Ps)
          P = Ps(j);
          src = floor ((anc(:)' * P) / N);   % rank of the ancestor (balanced blocks)
          dst = floor ((k * P) / N);         % rank of the new member
          moved = src ~= dst;
          pairs = unique ([anc(moved)' dst(moved)'], 'rows');
          links = unique ([src(moved)' dst(moved)'], 'rows');
          partners = 0;
          if (~isempty (links))
            partners = max (accumarray (links(:, 1) + 1, 1, [P 1]));
          end
          m(j, :) = m(j, :) + [sum(moved), size(pairs, 1), partners] / ndraw;
        end
      end
      printf ('   N = %g, ESS/N = %.2f (v = %.2f), mean of %d weight draws\n', N, ...
              1 / (1 + vs), vs, ndraw);
      printf ('   %6s %8s %10s %8s %10s %8s %10s\n', 'ranks', 'block', 'copies', 'share', ...
              'sends', 'partners', 'model');
      for j = 1:numel (Ps)
        P = Ps(j);
        model = min (N, sqrt (pi / 32) * (P - 1) * sqrt (vs * N));
        printf ('   %6d %8.0f %10.0f %7.2f%% %10.0f %8.1f %10.0f\n', P, N / P, m(j, 1), ...
                100 * m(j, 1) / N, m(j, 2), m(j, 3), model);
      end
    end
  end
end
