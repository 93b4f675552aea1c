package org.backstep.campaign;

import java.io.ByteArrayOutputStream;
import java.nio.ByteBuffer;
import java.nio.ByteOrder;
import java.nio.charset.StandardCharsets;
import java.util.ArrayList;
import java.util.List;
import java.util.zip.CRC32;
import java.util.zip.Deflater;

/**
 * A zip writer for crafting hostile files: entries with any name, the same name twice, headers
 * that lie about sizes or checksums, and data deflated or stored. {@link java.util.zip.ZipOutputStream}
 * refuses most of these, so the bytes are written here by the layout of PKWARE's APPNOTE.TXT
 * (local file header 0x04034b50, central directory header 0x02014b50, end of central directory
 * record 0x06054b50; section 4.3). Not for producing real files.
 */
final class ZipBytes {

    /**
     * One entry as it will be written.
     *
     * @param name the name, any text
     * @param data the bytes as stored in the file (already deflated when {@code deflated})
     * @param deflated method 8 (deflate) rather than 0 (stored)
     * @param size the uncompressed size the headers declare
     * @param crc the CRC-32 the headers declare
     */
    record Entry(String name, byte[] data, boolean deflated, long size, long crc) {

        /** @return an entry stored as it is, with true size and CRC-32 */
        static Entry stored(String name, byte[] content) {
            return new Entry(name, content, false, content.length, ZipBytes.crc(content));
        }

        /** @return the entry deflated, with true size and CRC-32 */
        static Entry deflated(String name, byte[] content) {
            return new Entry(name, deflate(content), true, content.length, ZipBytes.crc(content));
        }

        Entry withName(String n) {
            return new Entry(n, data, deflated, size, crc);
        }

        Entry withDeclaredSize(long s) {
            return new Entry(name, data, deflated, s, crc);
        }

        Entry withCrc(long c) {
            return new Entry(name, data, deflated, size, c);
        }
    }

    private ZipBytes() {
    }

    static long crc(byte[] b) {
        CRC32 c = new CRC32();
        c.update(b);
        return c.getValue();
    }

    static byte[] deflate(byte[] b) {
        Deflater d = new Deflater(Deflater.DEFAULT_COMPRESSION, true);
        d.setInput(b);
        d.finish();
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        byte[] buf = new byte[1 << 16];
        while (!d.finished()) {
            out.write(buf, 0, d.deflate(buf));
        }
        d.end();
        return out.toByteArray();
    }

    /**
     * A raw deflate stream of {@code zeros} zero bytes, made from repeated blocks so that a
     * gigabyte costs seconds, with its CRC-32; for an entry that is small in the file and huge when read.
     */
    static Entry zeros(String name, long zeros) {
        Deflater d = new Deflater(Deflater.BEST_COMPRESSION, true);
        byte[] block = new byte[1 << 20];
        CRC32 c = new CRC32();
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        byte[] buf = new byte[1 << 16];
        long left = zeros;
        while (left > 0) {
            int n = (int) Math.min(block.length, left);
            d.setInput(block, 0, n);
            c.update(block, 0, n);
            left -= n;
            while (!d.needsInput()) {
                out.write(buf, 0, d.deflate(buf));
            }
        }
        d.finish();
        while (!d.finished()) {
            out.write(buf, 0, d.deflate(buf));
        }
        d.end();
        return new Entry(name, out.toByteArray(), true, zeros, c.getValue());
    }

    /** The zip of the entries, in order; sizes above 4 GiB - 1 are written as 0xFFFFFFFF. */
    static byte[] write(List<Entry> entries) {
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        List<byte[]> central = new ArrayList<>();
        for (Entry e : entries) {
            byte[] name = e.name.getBytes(StandardCharsets.UTF_8);
            int offset = out.size();
            ByteBuffer h = le(30 + name.length);
            h.putInt(0x04034b50).putShort((short) 20).putShort((short) 0x0800).putShort((short) (e.deflated ? 8 : 0))
                    .putShort((short) 0).putShort((short) 0x21).putInt((int) e.crc).putInt(u32(e.data.length))
                    .putInt(u32(e.size)).putShort((short) name.length).putShort((short) 0).put(name);
            out.writeBytes(h.array());
            out.writeBytes(e.data);
            ByteBuffer c = le(46 + name.length);
            c.putInt(0x02014b50).putShort((short) 20).putShort((short) 20).putShort((short) 0x0800)
                    .putShort((short) (e.deflated ? 8 : 0)).putShort((short) 0).putShort((short) 0x21).putInt((int) e.crc)
                    .putInt(u32(e.data.length)).putInt(u32(e.size)).putShort((short) name.length).putShort((short) 0)
                    .putShort((short) 0).putShort((short) 0).putShort((short) 0).putInt(0).putInt(offset).put(name);
            central.add(c.array());
        }
        int cdOffset = out.size();
        int cdSize = 0;
        for (byte[] c : central) {
            out.writeBytes(c);
            cdSize += c.length;
        }
        ByteBuffer end = le(22);
        end.putInt(0x06054b50).putShort((short) 0).putShort((short) 0).putShort((short) central.size())
                .putShort((short) central.size()).putInt(cdSize).putInt(cdOffset).putShort((short) 0);
        out.writeBytes(end.array());
        return out.toByteArray();
    }

    private static int u32(long v) {
        return (int) Math.min(v, 0xFFFFFFFFL);
    }

    private static ByteBuffer le(int n) {
        return ByteBuffer.allocate(n).order(ByteOrder.LITTLE_ENDIAN);
    }
}
