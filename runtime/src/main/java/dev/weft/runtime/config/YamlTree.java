package dev.weft.runtime.config;

import com.fasterxml.jackson.core.JsonParseException;
import com.fasterxml.jackson.core.JsonProcessingException;
import com.fasterxml.jackson.core.JsonToken;
import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.JsonNodeFactory;
import com.fasterxml.jackson.databind.node.ObjectNode;
import com.fasterxml.jackson.databind.node.ArrayNode;
import com.fasterxml.jackson.dataformat.yaml.YAMLFactory;
import com.fasterxml.jackson.dataformat.yaml.YAMLParser;
import dev.weft.runtime.BadInputException;
import dev.weft.runtime.BadInputException.Problem;
import java.io.IOException;
import java.util.ArrayList;
import java.util.HashMap;
import java.util.List;
import java.util.Map;
import org.yaml.snakeyaml.error.Mark;
import org.yaml.snakeyaml.error.MarkedYAMLException;

/**
 * A YAML document read into a Jackson {@link JsonNode} tree, together with the line of every key
 * and list element (by key path) and the source text of every plain scalar that is not text.
 *
 * <p>The tree is built from Jackson's streaming YAML parser rather than by Jackson's own tree
 * reader, for three reasons: the line of each node is kept (a {@code JsonNode} forgets it), a key
 * given twice in one map is a problem rather than a silent overwrite, and an alias ({@code *name}),
 * which the streaming parser would hand over as the text of the anchor's name, is refused.
 *
 * <p>Not thread-safe; one instance per document.
 */
final class YamlTree {

    /**
     * An empty plain value ({@code jerk:}) reads as null, so it is reported rather than taken as text;
     * the YAML 1.1 words yes, no, on and off stay text, so only true and false are booleans.
     */
    private static final YAMLFactory FACTORY = YAMLFactory.builder()
            .enable(YAMLParser.Feature.EMPTY_STRING_AS_NULL)
            .enable(YAMLParser.Feature.PARSE_BOOLEAN_LIKE_WORDS_AS_STRINGS)
            .build();
    private static final JsonNodeFactory NODES = JsonNodeFactory.instance;

    /** Most characters a configuration document may hold: 1 Mi. */
    static final int MAX_DOCUMENT_CHARS = 1 << 20;
    /** Most characters of one text value (a path, a name, a reason): 4096. */
    static final int MAX_TEXT_CHARS = 4096;
    /** Most characters of one number as written: 64 (a double needs at most 25). */
    static final int MAX_NUMBER_CHARS = 64;

    private final String sourceName;
    private final Map<String, Integer> lines = new HashMap<>();
    private final Map<String, String> rawText = new HashMap<>();
    private final List<Problem> problems = new ArrayList<>();
    private JsonNode root;

    private YamlTree(String sourceName) {
        this.sourceName = sourceName;
    }

    /**
     * Reads one YAML document.
     *
     * @param yaml the document's text
     * @param sourceName the file name used in messages about the document as a whole
     * @throws BadInputException on a syntax error (naming file, line and column), an empty
     *     document, more than one document, a key given twice, or an alias
     */
    static YamlTree read(String yaml, String sourceName) throws BadInputException {
        if (yaml.length() > MAX_DOCUMENT_CHARS) {
            throw new BadInputException(sourceName, "holds " + yaml.length() + " characters; a configuration may hold at"
                    + " most " + MAX_DOCUMENT_CHARS + " (1 MiB)");
        }
        YamlTree t = new YamlTree(sourceName);
        try (YAMLParser p = FACTORY.createParser(yaml)) {
            JsonToken first = p.nextToken();
            if (first == null) {
                throw new BadInputException(sourceName, "the file holds no settings");
            }
            t.root = t.value(p, "");
            if (p.nextToken() != null) {
                t.problems.add(new Problem(sourceName + " (line " + p.currentTokenLocation().getLineNr() + ")",
                        "holds a second YAML document; a configuration is one document"));
            }
        } catch (JsonProcessingException e) {
            throw new BadInputException(List.of(syntaxProblem(sourceName, e)));
        } catch (IOException e) {
            throw new BadInputException(sourceName, "cannot be read: " + e.getMessage());
        }
        if (!t.problems.isEmpty()) {
            throw new BadInputException(t.problems);
        }
        return t;
    }

    /** The root node. */
    JsonNode root() {
        return root;
    }

    /** The line of the key (or list element) at {@code path}, or 0 when unknown. */
    int line(String path) {
        Integer l = lines.get(path);
        return l == null ? 0 : l;
    }

    /** The text of the non-text scalar at {@code path} as written, or null. */
    String rawText(String path) {
        return rawText.get(path);
    }

    private JsonNode value(YAMLParser p, String path) throws IOException {
        JsonToken t = p.currentToken();
        if (path.isEmpty()) {
            lines.put(path, p.currentTokenLocation().getLineNr());
        }
        switch (t) {
            case START_OBJECT: {
                ObjectNode o = NODES.objectNode();
                while (p.nextToken() == JsonToken.FIELD_NAME) {
                    String key = p.currentName();
                    String childPath = KeyPath.child(path, key);
                    int keyLine = p.currentTokenLocation().getLineNr();
                    p.nextToken();
                    if (o.has(key)) {
                        problems.add(new Problem(KeyPath.display(childPath) + " (line " + keyLine + ")",
                                "is given twice (first at line " + line(childPath) + ")"));
                        skipValue(p, childPath);
                        continue;
                    }
                    lines.put(childPath, keyLine);
                    o.set(key, value(p, childPath));
                }
                return o;
            }
            case START_ARRAY: {
                ArrayNode a = NODES.arrayNode();
                int i = 0;
                while (p.nextToken() != JsonToken.END_ARRAY) {
                    String childPath = KeyPath.index(path, i++);
                    lines.put(childPath, p.currentTokenLocation().getLineNr());
                    a.add(value(p, childPath));
                }
                return a;
            }
            case VALUE_STRING:
                if (p.isCurrentAlias()) {
                    problems.add(new Problem(KeyPath.display(path) + " (line " + p.currentTokenLocation().getLineNr()
                            + ")", "uses the alias *" + p.getText() + "; aliases are not supported, write the value out"));
                }
                if (p.getTextLength() > MAX_TEXT_CHARS) {
                    return tooLong(p, path, MAX_TEXT_CHARS);
                }
                return NODES.textNode(p.getText());
            case VALUE_NUMBER_INT:
            case VALUE_NUMBER_FLOAT:
                if (p.getTextLength() > MAX_NUMBER_CHARS) {
                    // refused before the digits are parsed: a huge number takes minutes to convert
                    return tooLong(p, path, MAX_NUMBER_CHARS);
                }
                rawText.put(path, p.getText());
                return number(p);
            case VALUE_TRUE:
            case VALUE_FALSE:
                rawText.put(path, p.getText());
                return NODES.booleanNode(t == JsonToken.VALUE_TRUE);
            case VALUE_NULL:
                return NODES.nullNode();
            default:
                throw new IllegalStateException("unexpected YAML token " + t);
        }
    }

    private JsonNode tooLong(YAMLParser p, String path, int max) throws IOException {
        problems.add(new Problem((path.isEmpty() ? sourceName : KeyPath.display(path)) + " (line "
                + p.currentTokenLocation().getLineNr() + ")", "is a value of " + p.getTextLength()
                + " characters; a " + (max == MAX_NUMBER_CHARS ? "number" : "value") + " may have at most " + max));
        return NODES.nullNode();
    }

    private void skipValue(YAMLParser p, String path) throws IOException {
        // Read the duplicate into a throw-away tree so that its own problems are still found.
        Map<String, Integer> keepLines = new HashMap<>(lines);
        Map<String, String> keepText = new HashMap<>(rawText);
        value(p, path);
        lines.clear();
        lines.putAll(keepLines);
        rawText.clear();
        rawText.putAll(keepText);
    }

    private static JsonNode number(YAMLParser p) throws IOException {
        try {
            switch (p.getNumberType()) {
                case INT:
                    return NODES.numberNode(p.getIntValue());
                case LONG:
                    return NODES.numberNode(p.getLongValue());
                case BIG_INTEGER:
                    return NODES.numberNode(p.getBigIntegerValue());
                default:
                    return NODES.numberNode(p.getDoubleValue());
            }
        } catch (JsonParseException e) {
            // YAML writes infinity and not-a-number as .inf, -.inf and .nan; Jackson's number parser
            // does not read them. They are numbers all the same, and the finite checks refuse them.
            String s = p.getText().trim().toLowerCase(java.util.Locale.ROOT);
            if (s.equals(".inf") || s.equals("+.inf")) {
                return NODES.numberNode(Double.POSITIVE_INFINITY);
            }
            if (s.equals("-.inf")) {
                return NODES.numberNode(Double.NEGATIVE_INFINITY);
            }
            if (s.equals(".nan")) {
                return NODES.numberNode(Double.NaN);
            }
            return NODES.textNode(p.getText());
        }
    }

    private static Problem syntaxProblem(String sourceName, JsonProcessingException e) {
        if (e.getCause() instanceof MarkedYAMLException m && m.getProblemMark() != null) {
            Mark at = m.getProblemMark();
            StringBuilder what = new StringBuilder("YAML syntax error: ").append(oneLine(m.getProblem()));
            Mark context = m.getContextMark();
            if (m.getContext() != null && context != null) {
                what.append(" (").append(oneLine(m.getContext())).append(" that starts at line ")
                        .append(context.getLine() + 1).append(", column ").append(context.getColumn() + 1).append(')');
            }
            return new Problem(sourceName + " (line " + (at.getLine() + 1) + ", column " + (at.getColumn() + 1) + ")",
                    what.toString());
        }
        var loc = e.getLocation();
        String where = loc == null ? sourceName
                : sourceName + " (line " + loc.getLineNr() + ", column " + loc.getColumnNr() + ")";
        return new Problem(where, "YAML syntax error: " + oneLine(e.getOriginalMessage()));
    }

    private static String oneLine(String s) {
        return s == null ? "" : s.replaceAll("\\s+", " ").trim();
    }
}
