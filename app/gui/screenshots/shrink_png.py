#!/usr/bin/python3
# Re-encodes an RGB(A) PNG from the window's screenshot writer as an 8-bit indexed PNG (the 256 most frequent
# colours, every other colour mapped to the nearest of them), zlib level 9: a third of the size, for the
# screenshots kept in the repository. Needs numpy (Debian: python3-numpy). Usage: shrink_png.py IN.png OUT.png
import sys, zlib, struct
import numpy as np

def read_png(path):
    data = open(path, 'rb').read()
    assert data[:8] == b'\x89PNG\r\n\x1a\n'
    pos, idat, w, h = 8, b'', 0, 0
    while pos < len(data):
        n, = struct.unpack('>I', data[pos:pos+4]); t = data[pos+4:pos+8]; c = data[pos+8:pos+8+n]; pos += 12 + n
        if t == b'IHDR':
            w, h, bd, ct = struct.unpack('>IIBB', c[:10]); assert bd == 8 and ct in (2, 6)
            ch = 4 if ct == 6 else 3
        elif t == b'IDAT': idat += c
    raw = zlib.decompress(idat)
    stride = w * ch
    img = np.zeros((h, stride), np.uint8)
    prev = np.zeros(stride, np.int32)
    for y in range(h):
        f = raw[y*(stride+1)]; line = np.frombuffer(raw, np.uint8, stride, y*(stride+1)+1).astype(np.int32)
        out = np.zeros(stride, np.int32)
        if f == 0: out = line
        elif f == 2: out = (line + prev) & 255
        else:
            for x in range(stride):
                a = out[x-ch] if x >= ch else 0; b = prev[x]; c = prev[x-ch] if x >= ch else 0
                if f == 1: p = a
                elif f == 3: p = (a + b) // 2
                else:
                    pa, pb, pc = abs(b - c), abs(a - c), abs(a + b - 2*c)
                    p = a if pa <= pb and pa <= pc else (b if pb <= pc else c)
                out[x] = (line[x] + p) & 255
        img[y] = out; prev = out
    return img.reshape(h, w, ch)[:, :, :3]

def chunk(t, c):
    return struct.pack('>I', len(c)) + t + c + struct.pack('>I', zlib.crc32(t + c) & 0xffffffff)

def write_indexed(path, rgb, colours=256):
    h, w, _ = rgb.shape
    flat = rgb.reshape(-1, 3)
    keys = (flat[:, 0].astype(np.int64) << 16) | (flat[:, 1].astype(np.int64) << 8) | flat[:, 2]
    uniq, inv, counts = np.unique(keys, return_inverse=True, return_counts=True)
    top = uniq[np.argsort(-counts)[:colours]]
    pal = np.stack([(top >> 16) & 255, (top >> 8) & 255, top & 255], 1).astype(np.int32)
    u = np.stack([(uniq >> 16) & 255, (uniq >> 8) & 255, uniq & 255], 1).astype(np.int32)
    # nearest palette entry for every distinct colour
    idx = np.empty(len(u), np.int64)
    for s in range(0, len(u), 4096):
        d = ((u[s:s+4096, None, :] - pal[None, :, :]) ** 2).sum(2); idx[s:s+4096] = d.argmin(1)
    px = idx[inv].astype(np.uint8).reshape(h, w)
    raw = b''.join(b'\x00' + px[y].tobytes() for y in range(h))
    png = b'\x89PNG\r\n\x1a\n' + chunk(b'IHDR', struct.pack('>IIBBBBB', w, h, 8, 3, 0, 0, 0))
    png += chunk(b'PLTE', pal.astype(np.uint8).tobytes()) + chunk(b'IDAT', zlib.compress(raw, 9)) + chunk(b'IEND', b'')
    open(path, 'wb').write(png)
    return len(uniq)

if __name__ == '__main__':
    n = write_indexed(sys.argv[2], read_png(sys.argv[1]))
    print(sys.argv[2], 'from', n, 'colours')
