function bench_resample ()
  % Systematic resampling of N = 1e7 weights: the kernel against the
  % fastest vectorised Octave implementation of the same computation and
  % against a memory-bandwidth reference (read the weights, write an
  % N-vector of doubles). Times are the best of 5 runs.
  N = 1e7;
  seed = 20240611;
  cycle = 3;
  nrep = 5;
  randn ('state', 2024);
  z = randn (1, N);
  w = exp (-0.5 * z .^ 2);        % Gaussian likelihood weights, ESS ~ 0.87 N
  clear z;
  printf ('   systematic resampling, N = M = %g, weights exp(-z^2/2), z ~ N(0,1)\n', N);

  % kernel
  tk = Inf;
  for r = 1:nrep
    t0 = tic ();
    a = sluice.kernel.resample (w, 'systematic', N, seed, cycle);
    tk = min (tk, toc (t0));
  end

  % memory-bandwidth reference: read w, write an N-vector of doubles
  tb = Inf;
  for r = 1:nrep
    clear y;
    t0 = tic ();
    y = -w;
    tb = min (tb, toc (t0));
  end
  clear y;

  % Octave, same computation: the uniform of stream (seed, member 0,
  % cycle, resample), positions (k + u) * sum(w) / M for k = 0..M-1, each
  % mapped to the first member whose running sum exceeds it
  u = first_uniform (seed, cycle);
  last = find (w > 0, 1, 'last');

  tl = Inf;
  for r = 1:nrep
    clear b;
    t0 = tic ();
    b = by_lookup (w, u, last);
    tl = min (tl, toc (t0));
  end
  same_l = isequal (a, b);
  clear b;

  th = Inf;
  for r = 1:nrep
    clear b;
    t0 = tic ();
    b = by_histc (w, u, last);
    th = min (th, toc (t0));
  end
  same_h = isequal (a, b);
  clear b;

  to = min (tl, th);
  printf ('   kernel  sluice.kernel.resample          %8.1f ms\n', 1e3 * tk);
  printf ('   Octave  cumsum + lookup                 %8.1f ms   same ancestors as the kernel: %s\n', ...
          1e3 * tl, yes_no (same_l));
  printf ('   Octave  cumsum + histc + repelem        %8.1f ms   same ancestors as the kernel: %s\n', ...
          1e3 * th, yes_no (same_h));
  printf ('   bandwidth reference  y = -w             %8.1f ms\n', 1e3 * tb);
  printf ('   kernel / bandwidth = %.2f (target <= 3)\n', tk / tb);
  printf ('   Octave / kernel    = %.2f (fastest Octave version)\n', to / tk);
end

function a = by_lookup (w, u, last)
  N = numel (w);
  c = cumsum (w);
  pos = ([0:N-1] + u) * (c(end) / N);   % brackets: a matrix, not a range
  a = lookup (c, pos) + 1;              % #{i : c_i <= pos} + 1
  a(a > N) = last;                      % rounding at the very end
end

function a = by_histc (w, u, last)
  N = numel (w);
  c = cumsum (w);
  pos = ([0:N-1] + u) * (c(end) / N);
  n = histc (pos, [0 c]);               % c_{i-1} <= pos < c_i -> bin i
  n(end - 1) = n(end - 1) + sum (n(N+1:end));
  a = repelem (1:N, n(1:N));
  a(a > N) = last;
end

function u = first_uniform (seed, cycle)
  % The first uniform of the stream (seed, member 0, cycle, purpose 6 =
  % resample): Philox4x32-10 (Salmon et al. 2011) with key = seed and
  % counter = (0, 0, cycle, 6), 64 bits from words 0 and 1, the top 53
  % bits k giving (k + 1/2) 2^-53.
  mask = uint64 (4294967295);
  M0 = uint64 (hex2dec ('D2511F53'));
  M1 = uint64 (hex2dec ('CD9E8D57'));
  W0 = uint64 (hex2dec ('9E3779B9'));
  W1 = uint64 (hex2dec ('BB67AE85'));
  k0 = uint64 (mod (seed, 2^32));
  k1 = uint64 (floor (seed / 2^32));
  c = uint64 ([0 0 cycle 6]);
  for r = 1:10
    p0 = M0 * c(1);
    p1 = M1 * c(3);
    c = [bitxor(bitxor(bitshift(p1, -32), c(2)), k0), bitand(p1, mask), ...
         bitxor(bitxor(bitshift(p0, -32), c(4)), k1), bitand(p0, mask)];
    k0 = bitand (k0 + W0, mask);
    k1 = bitand (k1 + W1, mask);
  end
  bits = bitor (c(1), bitshift (c(2), 32));
  u = (double (bitshift (bits, -11)) + 0.5) * 2^-53;
end

function s = yes_no (t)
  if (t)
    s = 'yes';
  else
    s = 'NO';
  end
end
