// AVX kernels for the float32 FFT passes and magnitudes; see fft_amd64.go.
// Written out from one template per kernel (the 8-lane and 4-lane radix-4
// passes differ only in register width and step).

//go:build amd64 && !purego

#include "textflag.h"

// func radix4AVX8(xr, xi, yr, yi *float32, q, sw, sbytes int, tw *float32)
// One radix-4 Stockham pass of stride s = sw*8 (see radix4Pass), 8 lanes.
TEXT ·radix4AVX8(SB), NOSPLIT, $0-64
	MOVQ xr+0(FP), AX
	MOVQ xi+8(FP), BX
	MOVQ yr+16(FP), CX
	MOVQ yi+24(FP), DX
	MOVQ q+32(FP), R9
	MOVQ sw+40(FP), R12
	MOVQ sbytes+48(FP), R14
	MOVQ tw+56(FP), R8
	MOVQ R9, R13
	IMULQ R14, R13
	LEAQ (R13)(R13*2), R11
	LEAQ (R14)(R14*2), R10
radix4AVX8_j:
	VBROADCASTSS 0(R8), Y10
	VBROADCASTSS 4(R8), Y11
	VBROADCASTSS 8(R8), Y12
	VBROADCASTSS 12(R8), Y13
	VBROADCASTSS 16(R8), Y14
	VBROADCASTSS 20(R8), Y15
	MOVQ R12, SI
radix4AVX8_t:
	VMOVUPS (AX), Y0
	VMOVUPS (AX)(R13*2), Y1
	VMOVUPS (BX), Y2
	VMOVUPS (BX)(R13*2), Y3
	VMOVUPS (AX)(R13*1), Y4
	VMOVUPS (AX)(R11*1), Y5
	VMOVUPS (BX)(R13*1), Y6
	VMOVUPS (BX)(R11*1), Y7
	VADDPS Y1, Y0, Y8
	VSUBPS Y1, Y0, Y0
	VADDPS Y3, Y2, Y9
	VSUBPS Y3, Y2, Y2
	VADDPS Y5, Y4, Y1
	VSUBPS Y5, Y4, Y4
	VADDPS Y7, Y6, Y3
	VSUBPS Y7, Y6, Y6
	VADDPS Y1, Y8, Y5
	VMOVUPS Y5, (CX)
	VADDPS Y3, Y9, Y7
	VMOVUPS Y7, (DX)
	VSUBPS Y1, Y8, Y8
	VSUBPS Y3, Y9, Y9
	VMULPS Y12, Y8, Y5
	VMULPS Y13, Y9, Y7
	VSUBPS Y7, Y5, Y5
	VMOVUPS Y5, (CX)(R14*2)
	VMULPS Y12, Y9, Y7
	VMULPS Y13, Y8, Y1
	VADDPS Y1, Y7, Y7
	VMOVUPS Y7, (DX)(R14*2)
	VADDPS Y6, Y0, Y1
	VSUBPS Y4, Y2, Y3
	VSUBPS Y6, Y0, Y0
	VADDPS Y4, Y2, Y2
	VMULPS Y10, Y1, Y5
	VMULPS Y11, Y3, Y7
	VSUBPS Y7, Y5, Y5
	VMOVUPS Y5, (CX)(R14*1)
	VMULPS Y10, Y3, Y7
	VMULPS Y11, Y1, Y4
	VADDPS Y4, Y7, Y7
	VMOVUPS Y7, (DX)(R14*1)
	VMULPS Y14, Y0, Y5
	VMULPS Y15, Y2, Y7
	VSUBPS Y7, Y5, Y5
	VMOVUPS Y5, (CX)(R10*1)
	VMULPS Y14, Y2, Y7
	VMULPS Y15, Y0, Y4
	VADDPS Y4, Y7, Y7
	VMOVUPS Y7, (DX)(R10*1)
	ADDQ $32, AX
	ADDQ $32, BX
	ADDQ $32, CX
	ADDQ $32, DX
	DECQ SI
	JNZ radix4AVX8_t
	ADDQ R10, CX
	ADDQ R10, DX
	ADDQ $24, R8
	DECQ R9
	JNZ radix4AVX8_j
	VZEROUPPER
	RET

// func radix4AVX4(xr, xi, yr, yi *float32, q, sw, sbytes int, tw *float32)
// One radix-4 Stockham pass of stride s = sw*4 (see radix4Pass), 4 lanes.
TEXT ·radix4AVX4(SB), NOSPLIT, $0-64
	MOVQ xr+0(FP), AX
	MOVQ xi+8(FP), BX
	MOVQ yr+16(FP), CX
	MOVQ yi+24(FP), DX
	MOVQ q+32(FP), R9
	MOVQ sw+40(FP), R12
	MOVQ sbytes+48(FP), R14
	MOVQ tw+56(FP), R8
	MOVQ R9, R13
	IMULQ R14, R13
	LEAQ (R13)(R13*2), R11
	LEAQ (R14)(R14*2), R10
radix4AVX4_j:
	VBROADCASTSS 0(R8), X10
	VBROADCASTSS 4(R8), X11
	VBROADCASTSS 8(R8), X12
	VBROADCASTSS 12(R8), X13
	VBROADCASTSS 16(R8), X14
	VBROADCASTSS 20(R8), X15
	MOVQ R12, SI
radix4AVX4_t:
	VMOVUPS (AX), X0
	VMOVUPS (AX)(R13*2), X1
	VMOVUPS (BX), X2
	VMOVUPS (BX)(R13*2), X3
	VMOVUPS (AX)(R13*1), X4
	VMOVUPS (AX)(R11*1), X5
	VMOVUPS (BX)(R13*1), X6
	VMOVUPS (BX)(R11*1), X7
	VADDPS X1, X0, X8
	VSUBPS X1, X0, X0
	VADDPS X3, X2, X9
	VSUBPS X3, X2, X2
	VADDPS X5, X4, X1
	VSUBPS X5, X4, X4
	VADDPS X7, X6, X3
	VSUBPS X7, X6, X6
	VADDPS X1, X8, X5
	VMOVUPS X5, (CX)
	VADDPS X3, X9, X7
	VMOVUPS X7, (DX)
	VSUBPS X1, X8, X8
	VSUBPS X3, X9, X9
	VMULPS X12, X8, X5
	VMULPS X13, X9, X7
	VSUBPS X7, X5, X5
	VMOVUPS X5, (CX)(R14*2)
	VMULPS X12, X9, X7
	VMULPS X13, X8, X1
	VADDPS X1, X7, X7
	VMOVUPS X7, (DX)(R14*2)
	VADDPS X6, X0, X1
	VSUBPS X4, X2, X3
	VSUBPS X6, X0, X0
	VADDPS X4, X2, X2
	VMULPS X10, X1, X5
	VMULPS X11, X3, X7
	VSUBPS X7, X5, X5
	VMOVUPS X5, (CX)(R14*1)
	VMULPS X10, X3, X7
	VMULPS X11, X1, X4
	VADDPS X4, X7, X7
	VMOVUPS X7, (DX)(R14*1)
	VMULPS X14, X0, X5
	VMULPS X15, X2, X7
	VSUBPS X7, X5, X5
	VMOVUPS X5, (CX)(R10*1)
	VMULPS X14, X2, X7
	VMULPS X15, X0, X4
	VADDPS X4, X7, X7
	VMOVUPS X7, (DX)(R10*1)
	ADDQ $16, AX
	ADDQ $16, BX
	ADDQ $16, CX
	ADDQ $16, DX
	DECQ SI
	JNZ radix4AVX4_t
	ADDQ R10, CX
	ADDQ R10, DX
	ADDQ $24, R8
	DECQ R9
	JNZ radix4AVX4_j
	VZEROUPPER
	RET

// func radix2AVX8(xr, xi, yr, yi *float32, n8, sbytes int)
// y[t] = x[t] + x[t+s], y[t+s] = x[t] - x[t+s] for t < s = n8*8.
TEXT ·radix2AVX8(SB), NOSPLIT, $0-48
	MOVQ xr+0(FP), AX
	MOVQ xi+8(FP), BX
	MOVQ yr+16(FP), CX
	MOVQ yi+24(FP), DX
	MOVQ n8+32(FP), SI
	MOVQ sbytes+40(FP), R13
radix2AVX8_t:
	VMOVUPS (AX), Y0
	VMOVUPS (AX)(R13*1), Y1
	VMOVUPS (BX), Y2
	VMOVUPS (BX)(R13*1), Y3
	VADDPS Y1, Y0, Y4
	VSUBPS Y1, Y0, Y5
	VADDPS Y3, Y2, Y6
	VSUBPS Y3, Y2, Y7
	VMOVUPS Y4, (CX)
	VMOVUPS Y5, (CX)(R13*1)
	VMOVUPS Y6, (DX)
	VMOVUPS Y7, (DX)(R13*1)
	ADDQ $32, AX
	ADDQ $32, BX
	ADDQ $32, CX
	ADDQ $32, DX
	DECQ SI
	JNZ radix2AVX8_t
	VZEROUPPER
	RET

// func magnitudeAVX8(dst, re, im *float32, n8 int)
// dst[k] = sqrt(re[k]^2 + im[k]^2) for k < n8*8.
TEXT ·magnitudeAVX8(SB), NOSPLIT, $0-32
	MOVQ dst+0(FP), CX
	MOVQ re+8(FP), AX
	MOVQ im+16(FP), BX
	MOVQ n8+24(FP), SI
magnitudeAVX8_k:
	VMOVUPS (AX), Y0
	VMOVUPS (BX), Y1
	VMULPS Y0, Y0, Y0
	VMULPS Y1, Y1, Y1
	VADDPS Y1, Y0, Y0
	VSQRTPS Y0, Y0
	VMOVUPS Y0, (CX)
	ADDQ $32, AX
	ADDQ $32, BX
	ADDQ $32, CX
	DECQ SI
	JNZ magnitudeAVX8_k
	VZEROUPPER
	RET

// LOADZ loads 8 packed complex values z[j..j+7] (z[j] = x[2j] + i·x[2j+1])
// from OFF(AX) into RE, IM, with lanes in the order j = 0,1,4,5,2,3,6,7
// (VSHUFPS works within 128-bit halves).
#define LOADZ(OFF, RE, IM) \
	VMOVUPS OFF(AX), Y8; \
	VMOVUPS 32+OFF(AX), Y9; \
	VSHUFPS $0x88, Y9, Y8, RE; \
	VSHUFPS $0xDD, Y9, Y8, IM

// BFLY: radix-4 butterflies on Y0..Y7 loaded as a = (Y0, Y2),
// b = (Y4, Y6), c = (Y1, Y3), d = (Y5, Y7), with twiddle vectors
// (w1r, w1i, w2r, w2i, w3r, w3i) at 0..160(R8); leaves y0 = (Y10, Y11),
// y1 = (Y14, Y15), y2 = (Y12, Y13), y3 = (Y8, Y9).
#define BFLY \
	VADDPS Y1, Y0, Y8; \
	VSUBPS Y1, Y0, Y0; \
	VADDPS Y3, Y2, Y9; \
	VSUBPS Y3, Y2, Y2; \
	VADDPS Y5, Y4, Y1; \
	VSUBPS Y5, Y4, Y4; \
	VADDPS Y7, Y6, Y3; \
	VSUBPS Y7, Y6, Y6; \
	VADDPS Y1, Y8, Y10; \
	VADDPS Y3, Y9, Y11; \
	VSUBPS Y1, Y8, Y8; \
	VSUBPS Y3, Y9, Y9; \
	VMULPS 64(R8), Y8, Y12; \
	VMULPS 96(R8), Y9, Y5; \
	VSUBPS Y5, Y12, Y12; \
	VMULPS 64(R8), Y9, Y13; \
	VMULPS 96(R8), Y8, Y5; \
	VADDPS Y5, Y13, Y13; \
	VADDPS Y6, Y0, Y1; \
	VSUBPS Y4, Y2, Y3; \
	VSUBPS Y6, Y0, Y0; \
	VADDPS Y4, Y2, Y2; \
	VMULPS 0(R8), Y1, Y14; \
	VMULPS 32(R8), Y3, Y5; \
	VSUBPS Y5, Y14, Y14; \
	VMULPS 0(R8), Y3, Y15; \
	VMULPS 32(R8), Y1, Y5; \
	VADDPS Y5, Y15, Y15; \
	VMULPS 128(R8), Y0, Y8; \
	VMULPS 160(R8), Y2, Y5; \
	VSUBPS Y5, Y8, Y8; \
	VMULPS 128(R8), Y2, Y9; \
	VMULPS 160(R8), Y0, Y5; \
	VADDPS Y5, Y9, Y9

// FIRSTSTORE: 4×8 transpose of the outputs so that y[4j+k] lands in order
// (lanes hold j = 0,1,4,5,2,3,6,7).
#define FIRSTSTORE \
	VUNPCKLPS Y14, Y10, Y0; \
	VUNPCKHPS Y14, Y10, Y1; \
	VUNPCKLPS Y8, Y12, Y2; \
	VUNPCKHPS Y8, Y12, Y3; \
	VUNPCKLPD Y2, Y0, Y4; \
	VUNPCKHPD Y2, Y0, Y5; \
	VUNPCKLPD Y3, Y1, Y6; \
	VUNPCKHPD Y3, Y1, Y7; \
	VPERM2F128 $0x20, Y5, Y4, Y0; \
	VPERM2F128 $0x31, Y5, Y4, Y1; \
	VPERM2F128 $0x20, Y7, Y6, Y2; \
	VPERM2F128 $0x31, Y7, Y6, Y3; \
	VMOVUPS Y0, (CX); \
	VMOVUPS Y1, 32(CX); \
	VMOVUPS Y2, 64(CX); \
	VMOVUPS Y3, 96(CX); \
	VUNPCKLPS Y15, Y11, Y0; \
	VUNPCKHPS Y15, Y11, Y1; \
	VUNPCKLPS Y9, Y13, Y2; \
	VUNPCKHPS Y9, Y13, Y3; \
	VUNPCKLPD Y2, Y0, Y4; \
	VUNPCKHPD Y2, Y0, Y5; \
	VUNPCKLPD Y3, Y1, Y6; \
	VUNPCKHPD Y3, Y1, Y7; \
	VPERM2F128 $0x20, Y5, Y4, Y0; \
	VPERM2F128 $0x31, Y5, Y4, Y1; \
	VPERM2F128 $0x20, Y7, Y6, Y2; \
	VPERM2F128 $0x31, Y7, Y6, Y3; \
	VMOVUPS Y0, (DX); \
	VMOVUPS Y1, 32(DX); \
	VMOVUPS Y2, 64(DX); \
	VMOVUPS Y3, 96(DX)

// func radix4FirstAVX(x, w, yr, yi *float32, q8, kbytes int, twv *float32)
// The first radix-4 pass (stride 1) fused with packing the real frame x
// into complex pairs and, when w is not nil, windowing it: for
// j < q = 8·q8, a..d = z[j + k·q], outputs y[4j + k]. kbytes = 8·q (the
// byte distance between the four input blocks of x); twv holds, per block
// of 8 j, the six twiddle vectors in the lane order of LOADZ.
TEXT ·radix4FirstAVX(SB), NOSPLIT, $0-56
	MOVQ x+0(FP), AX
	MOVQ w+8(FP), BX
	MOVQ yr+16(FP), CX
	MOVQ yi+24(FP), DX
	MOVQ q8+32(FP), SI
	MOVQ kbytes+40(FP), R13
	MOVQ twv+48(FP), R8
	LEAQ (AX)(R13*1), R9
	LEAQ (AX)(R13*2), R10
	LEAQ (R10)(R13*1), R11
	TESTQ BX, BX
	JNZ firstw
first:
	LOADZ(0, Y0, Y2)
	VMOVUPS (R9), Y8
	VMOVUPS 32(R9), Y9
	VSHUFPS $0x88, Y9, Y8, Y4
	VSHUFPS $0xDD, Y9, Y8, Y6
	VMOVUPS (R10), Y8
	VMOVUPS 32(R10), Y9
	VSHUFPS $0x88, Y9, Y8, Y1
	VSHUFPS $0xDD, Y9, Y8, Y3
	VMOVUPS (R11), Y8
	VMOVUPS 32(R11), Y9
	VSHUFPS $0x88, Y9, Y8, Y5
	VSHUFPS $0xDD, Y9, Y8, Y7
	BFLY
	FIRSTSTORE
	ADDQ $64, AX
	ADDQ $64, R9
	ADDQ $64, R10
	ADDQ $64, R11
	ADDQ $128, CX
	ADDQ $128, DX
	ADDQ $192, R8
	DECQ SI
	JNZ first
	VZEROUPPER
	RET
firstw:
	// Window pointers for the four blocks: BX, BX+K, BX+2K, BX+3K, kept
	// as offsets from the matching x pointers (same layout).
	MOVQ BX, R12
	SUBQ AX, R12
firstwloop:
	VMOVUPS (AX), Y8
	VMOVUPS 32(AX), Y9
	VMULPS (AX)(R12*1), Y8, Y8
	VMULPS 32(AX)(R12*1), Y9, Y9
	VSHUFPS $0x88, Y9, Y8, Y0
	VSHUFPS $0xDD, Y9, Y8, Y2
	VMOVUPS (R9), Y8
	VMOVUPS 32(R9), Y9
	VMULPS (R9)(R12*1), Y8, Y8
	VMULPS 32(R9)(R12*1), Y9, Y9
	VSHUFPS $0x88, Y9, Y8, Y4
	VSHUFPS $0xDD, Y9, Y8, Y6
	VMOVUPS (R10), Y8
	VMOVUPS 32(R10), Y9
	VMULPS (R10)(R12*1), Y8, Y8
	VMULPS 32(R10)(R12*1), Y9, Y9
	VSHUFPS $0x88, Y9, Y8, Y1
	VSHUFPS $0xDD, Y9, Y8, Y3
	VMOVUPS (R11), Y8
	VMOVUPS 32(R11), Y9
	VMULPS (R11)(R12*1), Y8, Y8
	VMULPS 32(R11)(R12*1), Y9, Y9
	VSHUFPS $0x88, Y9, Y8, Y5
	VSHUFPS $0xDD, Y9, Y8, Y7
	BFLY
	FIRSTSTORE
	ADDQ $64, AX
	ADDQ $64, R9
	ADDQ $64, R10
	ADDQ $64, R11
	ADDQ $128, CX
	ADDQ $128, DX
	ADDQ $192, R8
	DECQ SI
	JNZ firstwloop
	VZEROUPPER
	RET

// REV8 reverses the 8 floats of R (swap the 128-bit halves, then reverse
// each half).
#define REV8(R) \
	VPERM2F128 $0x01, R, R, R; \
	VSHUFPS $0x1B, R, R, R

// func unpackAVX(zr, zi, re, im, ur, ui *float32, m, nb int, half *float32)
// The real-FFT unpacking of RealFFT.finish for k = 1 .. 8·nb and their
// mirrors m−k, 8 values of k per step with the mirrors loaded and stored
// reversed.
TEXT ·unpackAVX(SB), NOSPLIT, $0-72
	MOVQ zr+0(FP), AX
	MOVQ zi+8(FP), BX
	MOVQ re+16(FP), CX
	MOVQ im+24(FP), DX
	MOVQ ur+32(FP), SI
	MOVQ ui+40(FP), DI
	MOVQ m+48(FP), R9
	MOVQ nb+56(FP), R10
	MOVQ half+64(FP), R11
	VBROADCASTSS (R11), Y15
	MOVQ $4, R8
	SUBQ $8, R9
	SHLQ $2, R9
unpack:
	VMOVUPS (AX)(R8*1), Y0
	VMOVUPS (BX)(R8*1), Y1
	VMOVUPS (AX)(R9*1), Y2
	VMOVUPS (BX)(R9*1), Y3
	REV8(Y2)
	REV8(Y3)
	VADDPS Y2, Y0, Y4
	VMULPS Y15, Y4, Y4
	VSUBPS Y3, Y1, Y5
	VMULPS Y15, Y5, Y5
	VADDPS Y3, Y1, Y6
	VMULPS Y15, Y6, Y6
	VSUBPS Y0, Y2, Y7
	VMULPS Y15, Y7, Y7
	VMOVUPS (SI)(R8*1), Y8
	VMOVUPS (DI)(R8*1), Y9
	VMULPS Y6, Y8, Y10
	VMULPS Y7, Y9, Y11
	VSUBPS Y11, Y10, Y10
	VMULPS Y7, Y8, Y11
	VMULPS Y6, Y9, Y12
	VADDPS Y12, Y11, Y11
	VADDPS Y10, Y4, Y0
	VMOVUPS Y0, (CX)(R8*1)
	VADDPS Y11, Y5, Y1
	VMOVUPS Y1, (DX)(R8*1)
	VSUBPS Y10, Y4, Y2
	VSUBPS Y5, Y11, Y3
	REV8(Y2)
	REV8(Y3)
	VMOVUPS Y2, (CX)(R9*1)
	VMOVUPS Y3, (DX)(R9*1)
	ADDQ $32, R8
	SUBQ $32, R9
	DECQ R10
	JNZ unpack
	VZEROUPPER
	RET

// func radix4S4AVX(xr, xi, yr, yi *float32, q2, nbytes int, tw4 *float32)
// The radix-4 pass of stride 4, two sub-transform positions j, j+1 per
// 8-lane step (lanes t = 0..3 of j, then of j+1): inputs x[t + 4j + k·n]
// with nbytes = 4·n, outputs y[t + 4(4j + k)]; tw4 holds per pair the six
// twiddle vectors (w(j) ×4, w(j+1) ×4).
TEXT ·radix4S4AVX(SB), NOSPLIT, $0-56
	MOVQ xr+0(FP), AX
	MOVQ xi+8(FP), BX
	MOVQ yr+16(FP), CX
	MOVQ yi+24(FP), DX
	MOVQ q2+32(FP), SI
	MOVQ nbytes+40(FP), R13
	MOVQ tw4+48(FP), R8
	LEAQ (R13)(R13*2), R11
s4loop:
	VMOVUPS (AX), Y0
	VMOVUPS (AX)(R13*2), Y1
	VMOVUPS (BX), Y2
	VMOVUPS (BX)(R13*2), Y3
	VMOVUPS (AX)(R13*1), Y4
	VMOVUPS (AX)(R11*1), Y5
	VMOVUPS (BX)(R13*1), Y6
	VMOVUPS (BX)(R11*1), Y7
	BFLY
	VPERM2F128 $0x20, Y14, Y10, Y0
	VPERM2F128 $0x20, Y8, Y12, Y1
	VPERM2F128 $0x31, Y14, Y10, Y2
	VPERM2F128 $0x31, Y8, Y12, Y3
	VMOVUPS Y0, (CX)
	VMOVUPS Y1, 32(CX)
	VMOVUPS Y2, 64(CX)
	VMOVUPS Y3, 96(CX)
	VPERM2F128 $0x20, Y15, Y11, Y0
	VPERM2F128 $0x20, Y9, Y13, Y1
	VPERM2F128 $0x31, Y15, Y11, Y2
	VPERM2F128 $0x31, Y9, Y13, Y3
	VMOVUPS Y0, (DX)
	VMOVUPS Y1, 32(DX)
	VMOVUPS Y2, 64(DX)
	VMOVUPS Y3, 96(DX)
	ADDQ $32, AX
	ADDQ $32, BX
	ADDQ $128, CX
	ADDQ $128, DX
	ADDQ $192, R8
	DECQ SI
	JNZ s4loop
	VZEROUPPER
	RET
