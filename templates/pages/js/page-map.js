// The pages' pan-and-zoom maps, drawn with the vendored Leaflet 1.9.4 from
// the GeoJSON the server embeds next to each map (web/pages/live_map.rs):
// no base layer (nothing is loaded from outside), a scale bar, zones as
// outlines only (largest first, so none hides another), events in their
// status colours (the server's palette) with a legend, the route and the
// start. On the trip preview a click on the map sets the start, and a click
// on an event ticks or unticks it. Without scripts the printable SVG stays.
(function () {
  'use strict';
  var maps = [];
  window.groundproofMaps = maps;

  function addLegend(map, data) {
    var legend = L.control({ position: 'bottomright' });
    legend.onAdd = function () {
      var div = L.DomUtil.create('div', 'map-legend');
      div.setAttribute('role', 'group');
      div.setAttribute('aria-label', 'Legend');
      (data.legend || []).forEach(function (e) {
        var row = L.DomUtil.create('div', '', div);
        var sw = L.DomUtil.create('span', 'swatch', row);
        sw.style.backgroundColor = e.colour;
        row.appendChild(document.createTextNode(e.label));
      });
      var kinds = {};
      (data.features || []).forEach(function (f) { kinds[f.properties.kind + (f.properties.priority ? '-p' : '')] = true; });
      if (kinds['zone-p']) { line(div, 'priority zone', ''); }
      if (kinds.zone) { line(div, 'zone', 'plain'); }
      if (kinds.route) { line(div, 'route', 'route'); }
      if (kinds.candidate) { line(div, 'not in the trip (click to add)', ''); }
      return div;
    };
    legend.addTo(map);
  }

  function line(div, label, cls) {
    var row = L.DomUtil.create('div', '', div);
    L.DomUtil.create('span', 'line ' + cls, row);
    row.appendChild(document.createTextNode(label));
  }

  function drawZone(map, f) {
    var p = f.properties;
    L.geoJSON(f, {
      style: {
        color: '#000000', weight: p.priority ? 2.5 : 1.2, dashArray: p.priority ? '7 4' : null,
        fill: false, opacity: p.priority ? 0.9 : 0.6
      }
    }).bindTooltip(p.name + (p.priority ? ' (priority zone)' : ''), { sticky: true }).addTo(map);
  }

  function drawEvent(map, f, el) {
    var p = f.properties;
    var style = { color: '#1a1a1a', weight: 1, fillColor: p.colour, fillOpacity: 0.75 };
    // Clicks on an event stay with it (they do not move the preview's start).
    var layer = L.geoJSON(f, { style: style, bubblingMouseEvents: false }).addTo(map);
    // A footprint of a hectare is a speck at reserve scale: a dot marks it.
    var dot = L.circleMarker(layer.getBounds().getCenter(), {
      bubblingMouseEvents: false, radius: 6, color: '#1a1a1a', weight: 1, fillColor: p.colour, fillOpacity: 0.9
    }).addTo(map);
    var html = '<a href="/events/' + p.id + '">' + p.code + '</a> · ' + p.label +
      ' · ' + Number(p.area_ha).toFixed(2) + ' ha';
    [layer, dot].forEach(function (l) {
      l.bindTooltip(p.code + ' (' + p.label + ')');
      l.on('click', function () {
        var box = document.getElementById('ev-' + p.id);
        if (box && el.dataset.pickEvents === 'yes') {
          box.checked = !box.checked;
          box.dispatchEvent(new Event('change', { bubbles: true }));
        } else {
          L.popup().setLatLng(layer.getBounds().getCenter()).setContent(html).openOn(map);
        }
      });
    });
  }

  // On the preview: an event not in the trip; a click adds its code.
  function drawCandidate(map, f) {
    var p = f.properties;
    var layer = L.geoJSON(f, { style: { color: '#595959', weight: 1, dashArray: '3 3', fill: false }, bubblingMouseEvents: false }).addTo(map);
    var dot = L.circleMarker(layer.getBounds().getCenter(), {
      bubblingMouseEvents: false, radius: 5, color: '#595959', weight: 1.5, fillColor: '#ffffff', fillOpacity: 1
    }).addTo(map);
    [layer, dot].forEach(function (l) {
      l.bindTooltip(p.code + ': not in the trip, click to add');
      l.on('click', function () {
        var add = document.getElementById('p-add');
        if (!add) { return; }
        var codes = add.value.split(/[\s,;]+/).filter(function (c) { return c; });
        if (codes.indexOf(p.code) < 0) { codes.push(p.code); }
        add.value = codes.join(', ');
        dot.setStyle({ fillColor: '#1a1a1a' });
      });
    });
  }

  function draw(el, data) {
    var map = L.map(el, { zoomSnap: 0.25, attributionControl: true });
    map.attributionControl.setPrefix('<a href="/static/leaflet.LICENSE">Leaflet</a>');
    L.control.scale({ imperial: false }).addTo(map);
    // The view first: Leaflet draws paths only on a map that has one.
    var fr = data.frame;
    if (fr) {
      map.fitBounds([[fr[1], fr[0]], [fr[3], fr[2]]], { padding: [24, 24], maxZoom: 17 });
    } else {
      map.setView([0, 0], 2);
    }
    var start = null;
    (data.features || []).forEach(function (f) {
      var k = f.properties.kind;
      if (k === 'zone') { drawZone(map, f); }
      if (k === 'event') { drawEvent(map, f, el); }
      if (k === 'candidate') { drawCandidate(map, f); }
      if (k === 'route') {
        L.geoJSON(f, { style: { color: '#e69f00', weight: 3, dashArray: '8 5' }, interactive: false }).addTo(map);
      }
      if (k === 'start') {
        var c = f.geometry.coordinates;
        start = L.circleMarker([c[1], c[0]], { radius: 7, color: '#000000', weight: 2, fillColor: '#ffffff', fillOpacity: 1 })
          .bindTooltip('start').addTo(map);
      }
    });
    addLegend(map, data);
    pickStart(map, el, start);
    return map;
  }

  // On the preview: a click on the map (not on an event) moves the start.
  function pickStart(map, el, start) {
    var lat = el.dataset.pickLat && document.getElementById(el.dataset.pickLat);
    var lon = el.dataset.pickLon && document.getElementById(el.dataset.pickLon);
    if (!lat || !lon) { return; }
    map.on('click', function (ev) {
      lat.value = ev.latlng.lat.toFixed(6);
      lon.value = ev.latlng.lng.toFixed(6);
      if (start) { start.setLatLng(ev.latlng); } else {
        start = L.circleMarker(ev.latlng, { radius: 7, color: '#000000', weight: 2, fillColor: '#ffffff', fillOpacity: 1 }).addTo(map);
      }
      lat.dispatchEvent(new Event('change', { bubbles: true }));
    });
  }

  document.querySelectorAll('.live-map[data-map]').forEach(function (el) {
    if (typeof L === 'undefined') { return; }
    var src = document.getElementById(el.dataset.map);
    if (!src) { return; }
    var data = JSON.parse(src.textContent);
    el.hidden = false;
    el.closest('.map-block').classList.add('live');
    var map = draw(el, data);
    el.gpMap = map;
    maps.push(map);
  });

  // The issue form: an extent file is read into the extent field.
  document.querySelectorAll('input[type=file][data-extent-into]').forEach(function (input) {
    input.addEventListener('change', function () {
      var target = document.getElementById(input.dataset.extentInto);
      var f = input.files && input.files[0];
      if (!f || !target) { return; }
      f.text().then(function (t) { target.value = t; });
    });
  });
})();
