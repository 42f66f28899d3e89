package dev.weft.runtime.report;

import dev.weft.runtime.dryrun.DryRunTrace;
import java.awt.image.BufferedImage;
import java.io.ByteArrayOutputStream;
import java.io.IOException;
import java.io.UncheckedIOException;
import java.util.Base64;
import javax.imageio.ImageIO;

/** A camera frame as a PNG image in base64, for an {@code img} element of the report. */
final class FramePng {

    private FramePng() {
    }

    static String encode(DryRunTrace.FrameSnapshot f) {
        BufferedImage img = new BufferedImage(f.width(), f.height(),
                f.channels() == 1 ? BufferedImage.TYPE_BYTE_GRAY : BufferedImage.TYPE_INT_RGB);
        byte[] p = f.pixels();
        for (int y = 0; y < f.height(); y++) {
            for (int x = 0; x < f.width(); x++) {
                int at = (y * f.width() + x) * f.channels();
                int rgb;
                if (f.channels() == 1) {
                    int g = p[at] & 0xff;
                    rgb = (g << 16) | (g << 8) | g;
                } else {
                    rgb = ((p[at] & 0xff) << 16) | ((p[at + 1] & 0xff) << 8) | (p[at + 2] & 0xff);
                }
                img.setRGB(x, y, rgb);
            }
        }
        ByteArrayOutputStream out = new ByteArrayOutputStream();
        try {
            if (!ImageIO.write(img, "png", out)) {
                throw new IllegalStateException("this Java has no PNG writer");
            }
        } catch (IOException e) {
            throw new UncheckedIOException(e);
        }
        return Base64.getEncoder().encodeToString(out.toByteArray());
    }
}
