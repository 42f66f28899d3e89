package dev.weft.runtime.report;

import java.io.StringReader;
import java.util.ArrayList;
import java.util.List;
import javax.xml.XMLConstants;
import javax.xml.parsers.DocumentBuilderFactory;
import javax.xml.xpath.XPathConstants;
import javax.xml.xpath.XPathFactory;
import org.w3c.dom.Document;
import org.w3c.dom.Element;
import org.w3c.dom.Node;
import org.w3c.dom.NodeList;
import org.xml.sax.InputSource;

/** Reads a report with the JDK's XML parser (a general-purpose reference outside weft) and queries it. */
final class Xhtml {

    private Xhtml() {
    }

    /**
     * Parses the whole document as XML; fails on anything not well-formed. With {@code namespaces},
     * prefixes and namespace declarations are checked as well.
     */
    static Document parse(String html, boolean namespaces) {
        try {
            DocumentBuilderFactory f = DocumentBuilderFactory.newInstance();
            f.setNamespaceAware(namespaces);
            f.setFeature(XMLConstants.FEATURE_SECURE_PROCESSING, true);
            f.setFeature("http://apache.org/xml/features/disallow-doctype-decl", false);
            f.setFeature("http://apache.org/xml/features/nonvalidating/load-external-dtd", false);
            f.setExpandEntityReferences(false);
            var builder = f.newDocumentBuilder();
            builder.setErrorHandler(null);
            return builder.parse(new InputSource(new StringReader(html)));
        } catch (Exception e) {
            throw new AssertionError("report is not well-formed XML: " + e.getMessage(), e);
        }
    }

    static Document parse(String html) {
        return parse(html, false);
    }

    /** Elements matching an XPath expression (on a document parsed without namespaces). */
    static List<Element> all(Node context, String xpath) {
        try {
            NodeList nodes = (NodeList) XPathFactory.newInstance().newXPath()
                    .evaluate(xpath, context, XPathConstants.NODESET);
            List<Element> out = new ArrayList<>();
            for (int i = 0; i < nodes.getLength(); i++) {
                out.add((Element) nodes.item(i));
            }
            return out;
        } catch (Exception e) {
            throw new AssertionError("bad XPath " + xpath, e);
        }
    }

    static Element one(Node context, String xpath) {
        List<Element> found = all(context, xpath);
        if (found.size() != 1) {
            throw new AssertionError("expected one match of " + xpath + ", found " + found.size());
        }
        return found.get(0);
    }

    /** {@code [contains(concat(' ', @class, ' '), ' name ')]}: an XPath test for one CSS class. */
    static String hasClass(String name) {
        return "[contains(concat(' ', normalize-space(@class), ' '), ' " + name + " ')]";
    }

    static double number(Element e, String attribute) {
        return Double.parseDouble(e.getAttribute(attribute));
    }

    /** The bands of a limiter lane's path ("Mx yhWvHh-Wz" each) as {x, width} pairs. */
    static List<double[]> bands(Element path) {
        List<double[]> out = new ArrayList<>();
        java.util.regex.Matcher m = java.util.regex.Pattern
                .compile("M([-0-9.]+) [-0-9.]+h([-0-9.]+)v[-0-9.]+h-[0-9.]+z").matcher(path.getAttribute("d"));
        int end = 0;
        while (m.find()) {
            if (m.start() != end) {
                throw new AssertionError("unexpected path data " + path.getAttribute("d"));
            }
            end = m.end();
            out.add(new double[] {Double.parseDouble(m.group(1)), Double.parseDouble(m.group(2))});
        }
        if (end != path.getAttribute("d").length()) {
            throw new AssertionError("unexpected path data " + path.getAttribute("d"));
        }
        return out;
    }

    /** The coordinates of an SVG path written by {@code MinMaxDecimator.pathData}: pairs after M or spaces. */
    static List<double[]> points(String d) {
        List<double[]> out = new ArrayList<>();
        String cleaned = d.replace("h0", " ").replace('M', ' ').trim();
        if (cleaned.isEmpty()) {
            return out;
        }
        String[] parts = cleaned.split("\\s+");
        for (int i = 0; i + 1 < parts.length; i += 2) {
            out.add(new double[] {Double.parseDouble(parts[i]), Double.parseDouble(parts[i + 1])});
        }
        return out;
    }
}
