package dev.weft.runtime.report;

import java.util.Locale;

/**
 * Text of an XHTML-compatible document built in one {@link StringBuilder}: every piece of text and
 * every attribute value goes through {@link #escape}, numbers are written with {@link Locale#ROOT}.
 * Not thread-safe; one instance per document.
 */
final class Markup {

    private final StringBuilder out;

    Markup(int capacity) {
        out = new StringBuilder(capacity);
    }

    /** Appends markup written by this package, unescaped. Callers pass literals only. */
    Markup raw(String markup) {
        out.append(markup);
        return this;
    }

    /** Appends text, escaped. */
    Markup text(String text) {
        escapeInto(text, out);
        return this;
    }

    /** Appends {@code <name>}, unescaped name. */
    Markup open(String name) {
        out.append('<').append(name).append('>');
        return this;
    }

    /** Appends {@code </name>}. */
    Markup close(String name) {
        out.append("</").append(name).append('>');
        return this;
    }

    /** Appends {@code <name>text</name>} with the text escaped. */
    Markup element(String name, String text) {
        return open(name).text(text).close(name);
    }

    /** Appends {@code <name attr="value" ...>}; pairs of attribute name and value, values escaped. */
    Markup openWith(String name, String... attributes) {
        startTag(name, attributes);
        out.append('>');
        return this;
    }

    /** Appends an empty element {@code <name attr="value" .../>}; only for SVG and HTML void elements. */
    Markup empty(String name, String... attributes) {
        startTag(name, attributes);
        out.append("/>");
        return this;
    }

    private void startTag(String name, String... attributes) {
        if ((attributes.length & 1) != 0) {
            throw new IllegalArgumentException("attributes of <" + name + "> must come in name/value pairs");
        }
        out.append('<').append(name);
        for (int i = 0; i < attributes.length; i += 2) {
            out.append(' ').append(attributes[i]).append("=\"");
            escapeInto(attributes[i + 1], out);
            out.append('"');
        }
    }

    int length() {
        return out.length();
    }

    @Override
    public String toString() {
        return out.toString();
    }

    /**
     * Text made safe for both HTML and XML 1.0, in element content and in quoted attribute values:
     * the five characters {@code & < > " '} become references, and characters XML 1.0 does not allow
     * (controls other than tab, line feed and carriage return, unpaired surrogates, U+FFFE, U+FFFF)
     * become U+FFFD. A null becomes the empty string.
     */
    static String escape(String text) {
        StringBuilder b = new StringBuilder(text == null ? 0 : text.length() + 16);
        escapeInto(text, b);
        return b.toString();
    }

    static void escapeInto(String text, StringBuilder b) {
        if (text == null) {
            return;
        }
        int n = text.length();
        for (int i = 0; i < n; i++) {
            char c = text.charAt(i);
            switch (c) {
                case '&' -> b.append("&amp;");
                case '<' -> b.append("&lt;");
                case '>' -> b.append("&gt;");
                case '"' -> b.append("&quot;");
                case '\'' -> b.append("&#39;");
                default -> {
                    if (Character.isHighSurrogate(c) && i + 1 < n && Character.isLowSurrogate(text.charAt(i + 1))) {
                        b.append(c).append(text.charAt(++i));
                    } else if (allowedInXml(c)) {
                        b.append(c);
                    } else {
                        b.append('\uFFFD');
                    }
                }
            }
        }
    }

    private static boolean allowedInXml(char c) {
        if (c < 0x20) {
            return c == '\t' || c == '\n' || c == '\r';
        }
        return !Character.isSurrogate(c) && c != '\uFFFE' && c != '\uFFFF';
    }

    /** A coordinate with one decimal, no trailing ".0". */
    static String coord(double v) {
        long tenths = Math.round(v * 10.0);
        if (tenths % 10 == 0) {
            return Long.toString(tenths / 10);
        }
        return (tenths < 0 ? "-" : "") + Math.abs(tenths) / 10 + "." + Math.abs(tenths) % 10;
    }

    /** A figure for people: up to {@code digits} significant digits, plain notation for usual sizes. */
    static String figure(double v, int digits) {
        if (Double.isNaN(v)) {
            return "NaN";
        }
        if (Double.isInfinite(v)) {
            return v > 0 ? "+\u221E" : "\u2212\u221E";
        }
        if (v == 0) {
            return "0";
        }
        double a = Math.abs(v);
        if (a >= 1e7 || a < 1e-4) {
            return String.format(Locale.ROOT, "%." + (digits - 1) + "e", v);
        }
        int intDigits = (int) Math.floor(Math.log10(a)) + 1;
        int decimals = Math.max(0, digits - intDigits);
        String s = String.format(Locale.ROOT, "%." + decimals + "f", v);
        if (s.indexOf('.') >= 0) {
            s = s.replaceAll("0+$", "");
            if (s.endsWith(".")) {
                s = s.substring(0, s.length() - 1);
            }
        }
        return s;
    }

    /** A figure with exactly {@code decimals} decimals (axis labels of one axis share them). */
    static String fixed(double v, int decimals) {
        String s = String.format(Locale.ROOT, "%." + decimals + "f", v);
        // "-0", "-0.00": a negative sign on a printed zero only confuses
        if (s.startsWith("-") && s.substring(1).replace("0", "").replace(".", "").isEmpty()) {
            s = s.substring(1);
        }
        return s;
    }
}
