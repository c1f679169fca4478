#!/bin/sh
# Re-creates the outside-encoder test files in testdata/ (see testdata/README.md).
# Needs Debian's sox (14.4.2) and ffmpeg. Every signal is a sox-synthesized
# sine of stated frequency and amplitude (vol 0.5 = half of full scale);
# -D turns off sox's automatic dither so that the samples are exactly the
# rounded sine. Rate and channel count are given to the null input (-n) too:
# otherwise sox synthesizes at 48 kHz mono and inserts its resampler, whose
# filter shifts the phase.
set -eu
cd "$(dirname "$0")/../testdata"

# WAV, mono, 48 kHz, 0.1 s of a 1000 Hz sine at amplitude 0.5.
sox -D -r 48000 -n -b 8 -e unsigned-integer sine1k_u8.wav synth 0.1 sine 1000 vol 0.5
sox -D -r 48000 -n -b 16 -e signed-integer sine1k_s16.wav synth 0.1 sine 1000 vol 0.5
sox -D -r 48000 -n -b 24 -e signed-integer sine1k_s24.wav synth 0.1 sine 1000 vol 0.5
sox -D -r 48000 -n -b 32 -e signed-integer sine1k_s32.wav synth 0.1 sine 1000 vol 0.5
sox -D -r 48000 -n -b 32 -e floating-point sine1k_f32.wav synth 0.1 sine 1000 vol 0.5
sox -D -r 48000 -n -b 64 -e floating-point sine1k_f64.wav synth 0.1 sine 1000 vol 0.5
# Sample-rate edges of the accepted range (8 kHz and 192 kHz).
sox -D -r 8000 -n -b 16 -e signed-integer sine1k_s16_8k.wav synth 0.1 sine 1000 vol 0.5
sox -D -r 192000 -n -b 16 -e signed-integer sine1k_s16_192k.wav synth 0.05 sine 1000 vol 0.5
# Stereo 44.1 kHz: 1000 Hz left, 1500 Hz right.
sox -D -r 44100 -c 2 -n -b 16 -e signed-integer sine_stereo_s16.wav synth 0.1 sine 1000 sine 1500 vol 0.5
# Four channels (sox writes WAVE_FORMAT_EXTENSIBLE for more than two).
sox -D -r 48000 -c 4 -n -b 16 -e signed-integer sine_4ch_s16.wav synth 0.1 sine 500 sine 1000 sine 1500 sine 2000 vol 0.5
# Four channels of float (sox writes format 3 + fact): the source for the
# float EXTENSIBLE file below.
sox -D -r 16000 -c 4 -n -b 32 -e floating-point sine_4ch_f32.wav synth 0.1 sine 500 sine 1000 sine 1500 sine 2000 vol 0.5
# FLAC, 16 and 24 bits.
sox -D -r 48000 -n -b 16 sine1k_s16.flac synth 0.1 sine 1000 vol 0.5
sox -D -r 48000 -n -b 24 sine1k_s24.flac synth 0.1 sine 1000 vol 0.5
# Ogg Vorbis (read through ffmpeg, not directly).
sox -D -r 48000 -n sine1k.ogg synth 0.5 sine 1000 vol 0.5
# µ-law WAV (format tag 7: read through ffmpeg, not directly).
sox -D -r 8000 -n -e mu-law sine1k_ulaw.wav synth 0.1 sine 1000 vol 0.5

# sox 14.4.2 on Debian cannot write MP3, and it never writes float
# EXTENSIBLE, so ffmpeg converts sox output for those two.
sox -D -r 48000 -n -b 16 -e signed-integer mp3src.wav synth 0.5 sine 1000 vol 0.5
ffmpeg -nostdin -hide_banner -loglevel error -y -i mp3src.wav -c:a libmp3lame -b:a 128k sine1k.mp3
rm mp3src.wav
# ffmpeg writes WAVE_FORMAT_EXTENSIBLE (float GUID) for four channels, plus a
# fact chunk and a LIST/INFO chunk before data.
ffmpeg -nostdin -hide_banner -loglevel error -y -i sine_4ch_f32.wav -c:a pcm_f32le sine_4ch_f32_ext.wav
# 16-bit mono with a LIST/INFO chunk before data (ffmpeg's wav muxer writes it).
ffmpeg -nostdin -hide_banner -loglevel error -y -i sine1k_s16.wav -c:a pcm_s16le sine1k_s16_list.wav
