/*
 * fftw_stft: time a float32 magnitude STFT of 60 s of 48 kHz mono with
 * FFTW (one r2c plan made with FFTW_MEASURE and reused for every frame,
 * single thread), for comparison with whirlfit's dsp package.
 *
 * usage: fftw_stft FRAMELEN HOP ROUNDS
 * prints one line per round: "fftw FRAMELEN HOP WALL CPU" (seconds), the
 * wall-clock and process CPU time of the
 * frame loop (windowing, transform, magnitudes into one frames x bins
 * float array allocated and first touched inside the timed region).
 * Planning is done once, before timing.
 *
 * build: cc -O2 -o fftw_stft fftw_stft.c -lfftw3f -lm
 */
#include <fftw3.h>
#include <math.h>
#include <stdio.h>
#include <stdlib.h>
#include <time.h>

static double clk(clockid_t id) {
	struct timespec ts;
	clock_gettime(id, &ts);
	return ts.tv_sec + 1e-9 * ts.tv_nsec;
}

int main(int argc, char **argv) {
	if (argc != 4) {
		fprintf(stderr, "usage: fftw_stft FRAMELEN HOP ROUNDS\n");
		return 2;
	}
	int n = atoi(argv[1]), hop = atoi(argv[2]), rounds = atoi(argv[3]);
	if (n < 4 || hop < 1 || rounds < 1) {
		fprintf(stderr, "fftw_stft: bad arguments\n");
		return 2;
	}
	const int fs = 48000, len = 60 * fs;
	float *x = malloc(sizeof(float) * len);
	unsigned long long s = 12345;
	for (int i = 0; i < len; i++) { /* tone plus LCG noise, content irrelevant to speed */
		s = s * 6364136223846793005ULL + 1442695040888963407ULL;
		double u = (double)(s >> 11) / 9007199254740992.0 - 0.5;
		x[i] = (float)(0.3 * sin(2 * M_PI * 400.0 * i / fs) + 0.2 * u);
	}
	float *win = malloc(sizeof(float) * n);
	for (int i = 0; i < n; i++)
		win[i] = (float)(0.5 - 0.5 * cos(2 * M_PI * i / n)); /* periodic Hann */
	int bins = n / 2 + 1, frames = 1 + (len - n) / hop;
	float *in = fftwf_malloc(sizeof(float) * n);
	fftwf_complex *out = fftwf_malloc(sizeof(fftwf_complex) * bins);
	fftwf_plan plan = fftwf_plan_dft_r2c_1d(n, in, out, FFTW_MEASURE);
	double check = 0;
	for (int r = 0; r < rounds; r++) {
		double t0 = clk(CLOCK_MONOTONIC), c0 = clk(CLOCK_PROCESS_CPUTIME_ID);
		float *mag = malloc(sizeof(float) * (size_t)frames * bins);
		for (int f = 0; f < frames; f++) {
			const float *p = x + (size_t)f * hop;
			for (int i = 0; i < n; i++)
				in[i] = p[i] * win[i];
			fftwf_execute(plan);
			float *row = mag + (size_t)f * bins;
			for (int k = 0; k < bins; k++)
				row[k] = sqrtf(out[k][0] * out[k][0] + out[k][1] * out[k][1]);
		}
		double t1 = clk(CLOCK_MONOTONIC), c1 = clk(CLOCK_PROCESS_CPUTIME_ID);
		check += mag[(size_t)(frames / 2) * bins + 8];
		free(mag);
		printf("fftw %d %d %.6f %.6f\n", n, hop, t1 - t0, c1 - c0);
	}
	fprintf(stderr, "fftw_stft: %d frames x %d bins (checksum %g)\n", frames, bins, check);
	fftwf_destroy_plan(plan);
	fftwf_free(in);
	fftwf_free(out);
	free(win);
	free(x);
	return 0;
}
