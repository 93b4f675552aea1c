package org.backstep.examples;

import com.fasterxml.jackson.databind.JsonNode;
import com.fasterxml.jackson.databind.node.ObjectNode;
import org.backstep.DiffusionModel;

import java.util.Iterator;
import java.util.Map;

/** The self-contained HTML page of the report folder: every figure of summary.json and every chart inline. */
final class Report {

    private Report() {
    }

    static String html(ObjectNode summary, Map<String, String> pngBase64, DiffusionModel model) {
        StringBuilder h = new StringBuilder();
        h.append("<!DOCTYPE html>\n<html lang=\"en\"><head><meta charset=\"utf-8\"><title>Backstep report</title>\n")
                .append("<style>body{font-family:sans-serif;max-width:900px;margin:2em auto;color:#1F2933}")
                .append("table{border-collapse:collapse;margin:1em 0}td,th{border:1px solid #D9D9CF;padding:3px 8px;text-align:right}")
                .append("th{background:#F7F7F2}td:first-child,th:first-child{text-align:left}img{max-width:100%}")
                .append(".caution{background:#FFF6E0;border-left:4px solid #E0A030;padding:0.5em 1em}</style></head><body>\n");
        h.append("<h1>Backstep report</h1>\n<p>").append(escape(model.toString())).append("</p>\n");
        h.append("<div class=\"caution\"><p><b>Cautions.</b> Imputed, denoised and synthetic values are not measurements. ")
                .append("Synthetic rows can reproduce training rows: check the memorization figures below and local privacy law ")
                .append("before sharing them. A likelihood score ranks records; it is not a calibrated probability of a fault. ")
                .append("For safety-, health- or compliance-critical decisions, defer to local regulations and qualified review.</p></div>\n");
        h.append("<h2>Figures</h2>\n");
        section(h, "", summary);
        h.append("<h2>Charts</h2>\n");
        for (Map.Entry<String, String> e : pngBase64.entrySet()) {
            h.append("<h3>").append(escape(e.getKey())).append("</h3>\n<img alt=\"").append(escape(e.getKey()))
                    .append("\" src=\"data:image/png;base64,").append(e.getValue()).append("\">\n");
        }
        h.append("<h2>Provenance</h2>\n<pre>").append(escape(model.describeText())).append("</pre>\n");
        h.append("</body></html>\n");
        return h.toString();
    }

    private static void section(StringBuilder h, String title, JsonNode node) {
        if (!title.isEmpty()) {
            h.append("<h3>").append(escape(title)).append("</h3>\n");
        }
        h.append("<table>\n");
        Iterator<Map.Entry<String, JsonNode>> it = node.fields();
        java.util.List<Map.Entry<String, JsonNode>> nested = new java.util.ArrayList<>();
        while (it.hasNext()) {
            Map.Entry<String, JsonNode> e = it.next();
            if (e.getValue().isContainerNode()) {
                nested.add(e);
            } else {
                h.append("<tr><td>").append(escape(e.getKey())).append("</td><td>")
                        .append(escape(format(e.getValue()))).append("</td></tr>\n");
            }
        }
        h.append("</table>\n");
        for (Map.Entry<String, JsonNode> e : nested) {
            if (e.getValue().isArray()) {
                array(h, e.getKey(), e.getValue());
            } else {
                section(h, e.getKey(), e.getValue());
            }
        }
    }

    private static void array(StringBuilder h, String title, JsonNode arr) {
        h.append("<h4>").append(escape(title)).append("</h4>\n<table>\n");
        if (arr.size() > 0 && arr.get(0).isObject()) {
            h.append("<tr>");
            arr.get(0).fieldNames().forEachRemaining(f -> h.append("<th>").append(escape(f)).append("</th>"));
            h.append("</tr>\n");
        }
        for (JsonNode row : arr) {
            h.append("<tr>");
            if (row.isObject()) {
                row.forEach(v -> h.append("<td>").append(escape(format(v))).append("</td>"));
            } else {
                h.append("<td>").append(escape(format(row))).append("</td>");
            }
            h.append("</tr>\n");
        }
        h.append("</table>\n");
    }

    private static String format(JsonNode v) {
        if (v.isFloatingPointNumber()) {
            return String.format(java.util.Locale.ROOT, "%.4g", v.asDouble());
        }
        return v.asText();
    }

    static String escape(String s) {
        return s.replace("&", "&amp;").replace("<", "&lt;").replace(">", "&gt;").replace("\"", "&quot;");
    }
}
